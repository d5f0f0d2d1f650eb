/** Synchronous inspection entry points: bytes or a parsed mesh in, InspectionReport out. */
import { readMesh } from './read';
import { findSelfIntersections } from './self-intersect';
import { validateMesh } from './validate';
import { buildReport, type InspectionReport, type InspectOptions } from './report';
import { DEFAULT_SAMPLE_LIMIT } from './tolerances';
import { analyseCellSize, cellSizeChecksOf, DEFAULT_THIN_CELLS } from './thickness';
import { DEFAULT_MAX_FACES, type ParsedMesh } from './types';

export interface InspectRunOptions extends InspectOptions {
	/** Timings already measured (e.g. reading), merged into the report's `timings`. */
	timings?: Record<string, number>;
}

/** Full report on one thread, self-intersections included unless skipSelfIntersections. */
export function inspectMesh(parsed: ParsedMesh, opts: InspectRunOptions = {}): InspectionReport {
	const t0 = performance.now();
	const maxFaces = opts.maxFaces ?? DEFAULT_MAX_FACES;
	validateMesh(parsed, { maxFaces });
	const si = opts.skipSelfIntersections ? null : findSelfIntersections(parsed, { sampleLimit: opts.sampleLimit ?? DEFAULT_SAMPLE_LIMIT });
	const report = buildReport(parsed, { ...opts, selfIntersections: si });
	if (opts.cellSize !== undefined && report.faces > 0) {
		const t1 = performance.now();
		const thinCells = opts.thinCells ?? DEFAULT_THIN_CELLS;
		const res = analyseCellSize(parsed, { cellSize: opts.cellSize, thinCells });
		report.cellSizeChecks = cellSizeChecksOf(res, thinCells, performance.now() - t1);
		report.timings.cellSize = report.cellSizeChecks.ms;
	}
	report.timings.total = (opts.timings?.read ?? 0) + performance.now() - t0;
	return report;
}

/** Read (STL/PLY/OBJ by name or content) and inspect. Throws MeshReadError when the file cannot be read. */
export function inspectBytes(bytes: Uint8Array, fileName: string, opts: InspectRunOptions = {}): InspectionReport {
	const t0 = performance.now();
	const parsed = readMesh(bytes, fileName, { maxFaces: opts.maxFaces });
	const timings = { ...(opts.timings ?? {}), read: performance.now() - t0 };
	return inspectMesh(parsed, { ...opts, fileName, timings });
}
