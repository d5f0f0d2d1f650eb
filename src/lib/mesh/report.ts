/** The inspection report: its types (report-types.ts) and the function that builds it (build-report.ts). */
export * from './report-types';
export { buildReport } from './build-report';
