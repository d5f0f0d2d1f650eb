// The dataset hand-off: a run's or a project's signed-off revisions as a manifest (CSV or JSON Lines)
// and as a zip of the meshes with both manifests inside. Everything streams: revisions are read in
// pages of `pageSize` by revision id, rows go out as they are made, and the zip takes one mesh at a
// time from the file store, waiting for the response to take the bytes (back-pressure) before it
// opens the next. Nothing holds the whole export in memory, whatever the number of revisions.
//
// "Cleared" here means signed off (state `signed-off`): a revision that passed the gate and that a
// reviewer cleared for the solver, so the manifest can say who signed off and when. A `clear`
// revision (gate passed, nobody has signed it off yet) is not in the export.
import { createReadStream, createWriteStream } from 'node:fs';
import fs from 'node:fs/promises';
import path from 'node:path';
import { randomUUID } from 'node:crypto';
import { Readable, Transform, type Writable } from 'node:stream';
import { finished } from 'node:stream/promises';
import { ZipArchive } from 'archiver';
import { stringify, type Stringifier } from 'csv-stringify';
import { and, asc, eq, gt, inArray, sql, type SQL } from 'drizzle-orm';
import type { SessionUser } from './auth';
import { audit } from './audit';
import { config } from './config';
import type { Db } from './db';
import { checkRun, decision, gateProfile, part, project, revision, ruleResult, run, user } from './db/schema';
import { assertCan, findProjectForUser } from './revisions';
import { getStore } from './storage';
import { DomainError } from '../domain-error';
import { RULE_IDS, type RuleId } from '../gate/rules';
import { loggable } from './api/respond';

export const DATASET_FORMATS = ['csv', 'jsonl', 'zip'] as const;
export type DatasetFormat = (typeof DATASET_FORMATS)[number];

export type DatasetScopeInput = { kind: 'run'; id: number } | { kind: 'project'; slugOrId: string };

export interface DatasetScope {
	kind: 'run' | 'project';
	projectId: number;
	projectSlug: string;
	units: string;
	runId: number | null;
	runName: string | null;
	/** Base of the download's file name, e.g. `keel-bulbs-dataset` or `keel-bulbs-run-12-dataset`. */
	fileBase: string;
}

/** How each gate rule came out on the signed-off check: `off` when the profile did not have the rule on. */
export type RuleCell = 'passed' | 'failed' | 'not-checked' | 'off';

/** One manifest row; the keys are the CSV columns, in DATASET_COLUMNS order. */
export type ManifestRow = {
	project: string;
	run_id: number | null;
	run_name: string | null;
	iteration: number | null;
	part: string;
	part_name: string;
	revision: number;
	revision_id: number;
	file_name: string;
	zip_path: string;
	file_sha256: string;
	file_size: number;
	format: string;
	download_url: string;
	units: string;
	profile_version: number | null;
	genus: number | null;
	shells: number | null;
	volume: number | null;
	surface_area: number | null;
	wetted_area: number | null;
	frontal_area: number | null;
	signed_off_by: string | null;
	signed_off_by_email: string | null;
	signed_off_at: string | null;
	override_reason: string | null;
} & { [K in `rule_${RuleId}` | `rule_${RuleId}_measured` | `rule_${RuleId}_limit`]: string | null } & { meta: unknown };

/** The manifest columns, in order; README "Dataset export" says what each holds. */
export const DATASET_COLUMNS: (keyof ManifestRow & string)[] = [
	'project',
	'run_id',
	'run_name',
	'iteration',
	'part',
	'part_name',
	'revision',
	'revision_id',
	'file_name',
	'zip_path',
	'file_sha256',
	'file_size',
	'format',
	'download_url',
	'units',
	'profile_version',
	'genus',
	'shells',
	'volume',
	'surface_area',
	'wetted_area',
	'frontal_area',
	'signed_off_by',
	'signed_off_by_email',
	'signed_off_at',
	'override_reason',
	...RULE_IDS.flatMap((r) => [`rule_${r}`, `rule_${r}_measured`, `rule_${r}_limit`] as const),
	'meta'
];

/** The run or project a person asks for, in their own team, with the permission checked. */
export async function resolveDatasetScope(db: Db, u: SessionUser, input: DatasetScopeInput): Promise<DatasetScope> {
	assertCan(u, 'export-dataset');
	if (input.kind === 'project') {
		const p = await findProjectForUser(db, u, input.slugOrId);
		return { kind: 'project', projectId: p.id, projectSlug: p.slug, units: p.units, runId: null, runName: null, fileBase: `${p.slug}-dataset` };
	}
	const [r] = await db
		.select({ id: run.id, name: run.name, projectId: project.id, slug: project.slug, units: project.units })
		.from(run)
		.innerJoin(project, eq(project.id, run.projectId))
		.where(and(eq(run.id, input.id), eq(project.teamId, u.teamId)))
		.limit(1);
	if (!r) throw new DomainError('not-found', `No run ${input.id} in your team.`);
	return { kind: 'run', projectId: r.projectId, projectSlug: r.slug, units: r.units, runId: r.id, runName: r.name, fileBase: `${r.slug}-run-${r.id}-dataset` };
}

function scopeCondition(s: { runId: number | null; projectId: number }): SQL {
	return s.runId !== null ? eq(revision.runId, s.runId) : eq(part.projectId, s.projectId);
}

/** How many signed-off revisions the scope holds (what the export will list unless sign-offs happen meanwhile). */
export async function countCleared(db: Db, s: { runId: number | null; projectId: number }): Promise<number> {
	const [r] = await db
		.select({ n: sql<number>`count(*)` })
		.from(revision)
		.innerJoin(part, eq(part.id, revision.partId))
		.where(and(eq(revision.status, 'signed-off'), scopeCondition(s)));
	return Number(r.n);
}

const num = (v: unknown): number | null => {
	if (v === null || v === undefined || v === '' || v === 'null') return null;
	const n = Number(v);
	return Number.isFinite(n) ? n : null;
};

/** mysql2 hands MariaDB's JSON columns over as text; MySQL's as parsed values. */
const parsedJson = (v: unknown): unknown => {
	if (typeof v !== 'string') return v ?? null;
	try {
		return JSON.parse(v);
	} catch {
		return v;
	}
};

export interface RowOptions {
	/** Revisions read per query (default 500). */
	pageSize?: number;
	/** Called after each page is read, with the number of rows in it (tests watch the streaming with it). */
	onPage?: (rows: number) => void;
}

/**
 * The manifest rows of a scope, read page by page in revision-id order (a keyset on the primary key,
 * so a page costs the same at the end of 100,000 revisions as at the start).
 *
 * Figures come from the revision's latest check, which is the check it was signed off on: a
 * signed-off revision cannot be checked again (revision-states.ts has no event out of `signed-off`).
 * Volume and areas are read from the report JSON with JSON_VALUE, so the large report text itself
 * never leaves the database.
 */
export async function* manifestRows(db: Db, s: DatasetScope, opts: RowOptions = {}): AsyncGenerator<ManifestRow> {
	const pageSize = opts.pageSize ?? 500;
	const origin = config.origin.replace(/\/$/, '');
	let after = 0;
	for (;;) {
		const page = await db
			.select({
				id: revision.id,
				number: revision.number,
				fileName: revision.fileName,
				sha256: revision.sha256,
				size: revision.size,
				format: revision.format,
				runId: revision.runId,
				runName: run.name,
				iteration: revision.iteration,
				meta: revision.meta,
				partSlug: part.slug,
				partName: part.name,
				checkId: checkRun.id,
				genus: checkRun.genus,
				shells: checkRun.shells,
				volume: sql<string | null>`json_value(${checkRun.report}, '$.volume')`,
				area: sql<string | null>`json_value(${checkRun.report}, '$.area')`,
				wettedArea: sql<string | null>`json_value(${checkRun.report}, '$.wettedArea')`,
				frontalArea: sql<string | null>`json_value(${checkRun.report}, '$.projectedArea.flow.area')`,
				checkProfileVersion: gateProfile.version,
				signedProfileVersion: decision.gateProfileVersion,
				signedAt: decision.createdAt,
				overrideReason: decision.overrideReason,
				byName: user.name,
				byEmail: user.email
			})
			.from(revision)
			.innerJoin(part, eq(part.id, revision.partId))
			.leftJoin(run, eq(run.id, revision.runId))
			.leftJoin(checkRun, eq(checkRun.id, revision.latestCheckId))
			.leftJoin(gateProfile, eq(gateProfile.id, checkRun.gateProfileId))
			.leftJoin(decision, eq(decision.id, sql`(select max(d2.id) from ${decision} d2 where d2.revision_id = ${revision.id} and d2.kind = 'sign-off')`))
			.leftJoin(user, eq(user.id, decision.byId))
			.where(and(eq(revision.status, 'signed-off'), scopeCondition(s), gt(revision.id, after)))
			.orderBy(asc(revision.id))
			.limit(pageSize);
		opts.onPage?.(page.length);
		if (page.length === 0) return;
		const checkIds = page.map((r) => r.checkId).filter((x): x is number => x !== null);
		const results = checkIds.length
			? await db
					.select({ checkRunId: ruleResult.checkRunId, rule: ruleResult.rule, passed: ruleResult.passed, severity: ruleResult.severity, measured: ruleResult.measured, limit: ruleResult.limitText })
					.from(ruleResult)
					.where(inArray(ruleResult.checkRunId, checkIds))
			: [];
		const byCheck = new Map<number, typeof results>();
		for (const rr of results) {
			const list = byCheck.get(rr.checkRunId) ?? [];
			list.push(rr);
			byCheck.set(rr.checkRunId, list);
		}
		for (const r of page) {
			const row = {
				project: s.projectSlug,
				run_id: r.runId,
				run_name: r.runName,
				iteration: r.iteration,
				part: r.partSlug,
				part_name: r.partName,
				revision: r.number,
				revision_id: r.id,
				file_name: r.fileName,
				zip_path: zipPath(r.partSlug, r.number, r.format),
				file_sha256: r.sha256,
				file_size: Number(r.size),
				format: r.format,
				download_url: `${origin}/api/v1/revisions/${r.id}/file`,
				units: s.units,
				profile_version: r.signedProfileVersion ?? r.checkProfileVersion ?? null,
				genus: r.genus,
				shells: r.shells,
				volume: num(r.volume),
				surface_area: num(r.area),
				wetted_area: num(r.wettedArea),
				frontal_area: num(r.frontalArea),
				signed_off_by: r.byName ?? null,
				signed_off_by_email: r.byEmail ?? null,
				signed_off_at: r.signedAt ? r.signedAt.toISOString() : null,
				override_reason: r.overrideReason ?? null
			} as Record<string, unknown>;
			const rules = new Map((r.checkId !== null ? byCheck.get(r.checkId) : undefined)?.map((x) => [x.rule, x]) ?? []);
			for (const id of RULE_IDS) {
				const x = rules.get(id);
				row[`rule_${id}`] = (x ? (x.passed ? 'passed' : x.severity === 'blocking' ? 'failed' : 'not-checked') : 'off') satisfies RuleCell;
				row[`rule_${id}_measured`] = x?.measured ?? null;
				row[`rule_${id}_limit`] = x?.limit ?? null;
			}
			row.meta = parsedJson(r.meta);
			yield row as ManifestRow;
		}
		after = page[page.length - 1].id;
		if (page.length < pageSize) return;
	}
}

/** Where a revision's file sits in the zip: `<part>/<part>-rev<N>.<format>`. */
export function zipPath(partSlug: string, number: number, format: string): string {
	const ext = format.replace(/[^a-z0-9]/gi, '') || 'bin';
	return `${partSlug}/${partSlug}-rev${number}.${ext}`;
}

/** A CSV writer with one header row in DATASET_COLUMNS order; empty cell for null, `meta` as JSON text. */
export function csvStringifier(): Stringifier {
	return stringify({
		header: true,
		columns: DATASET_COLUMNS,
		cast: {
			boolean: (v) => (v ? 'true' : 'false'),
			object: (v) => JSON.stringify(v),
			date: (v) => v.toISOString()
		}
	});
}

/** One JSON Lines line: the same keys and values as the CSV row, `meta` as JSON, numbers as numbers. */
export function jsonLine(row: ManifestRow): string {
	const out: Record<string, unknown> = {};
	for (const c of DATASET_COLUMNS) out[c] = row[c] ?? null;
	return JSON.stringify(out) + '\n';
}

/** Counts rows and bytes on their way to the response, without changing them. */
class Meter extends Transform {
	bytes = 0;
	override _transform(chunk: Buffer, _enc: BufferEncoding, done: (e?: Error | null, c?: Buffer) => void) {
		this.bytes += chunk.length;
		done(null, chunk);
	}
}

class ExportCancelled extends Error {}

/** Writes to a Node stream and waits for it to drain when its buffer is full. */
async function writeWithPressure(w: Writable, chunk: unknown): Promise<void> {
	if (w.write(chunk)) return;
	await new Promise<void>((resolve, reject) => {
		const done = (e?: unknown) => {
			w.off('drain', onDrain);
			w.off('error', done);
			w.off('close', onClose);
			if (e) reject(e);
			else resolve();
		};
		const onDrain = () => done();
		const onClose = () => done(new ExportCancelled('the stream closed'));
		w.on('drain', onDrain);
		w.on('error', done);
		w.on('close', onClose);
	});
}

/** Appends one entry and resolves once archiver has taken all of its bytes in (its `entry` event). */
export function appendEntry(archive: ZipArchive, source: Readable, name: string): Promise<void> {
	return new Promise<void>((resolve, reject) => {
		const cleanup = () => {
			archive.off('entry', onEntry);
			archive.off('error', onError);
			archive.off('close', onClose);
			source.off('error', onError);
		};
		const onEntry = () => {
			cleanup();
			resolve();
		};
		const onError = (e: unknown) => {
			cleanup();
			// Archiver and zip-stream may still report the same failure; the archive's own error
			// listener (openDatasetExport) takes it, and this one keeps a late one from the file quiet.
			source.on('error', () => {});
			source.destroy();
			reject(e);
		};
		const onClose = () => onError(new ExportCancelled('the download was closed'));
		archive.on('entry', onEntry);
		archive.on('error', onError);
		archive.on('close', onClose);
		source.on('error', onError);
		archive.append(source, { name });
	});
}

export interface ExportOptions extends RowOptions {
	/** Called when the export has ended, whichever way (tests wait on it). */
	onDone?: (outcome: ExportOutcome) => void;
}

export interface ExportOutcome {
	status: 'finished' | 'cancelled' | 'failed';
	rows: number;
	bytes: number;
	error?: string;
}

/** A started export: the body to send and the headers that go with it. */
export interface DatasetExport {
	body: ReadableStream<Uint8Array>;
	fileName: string;
	contentType: string;
	/** Signed-off revisions counted when the export started. */
	expected: number;
}

const CONTENT_TYPES: Record<DatasetFormat, string> = { csv: 'text/csv; charset=utf-8', jsonl: 'application/x-ndjson; charset=utf-8', zip: 'application/zip' };

/**
 * Starts an export and records it in the audit trail twice: `dataset-export-started` before the
 * first byte (scope, format, the count of signed-off revisions at that moment, who), then
 * `dataset-export-finished` with the rows and bytes actually sent, or `dataset-export-cancelled` /
 * `dataset-export-failed` when the download stopped early. Audit rows are never updated.
 */
export async function openDatasetExport(db: Db, u: SessionUser, s: DatasetScope, format: DatasetFormat, opts: ExportOptions = {}): Promise<DatasetExport> {
	if (!(DATASET_FORMATS as readonly string[]).includes(format)) throw new DomainError('invalid', `Unknown dataset format "${String(format).slice(0, 20)}": use csv, jsonl or zip.`);
	const expected = await countCleared(db, s);
	const entity = s.kind;
	const entityId = s.kind === 'run' ? s.runId! : s.projectId;
	const scopeDetail = { scope: s.kind, project: s.projectSlug, runId: s.runId, runName: s.runName, format };
	await audit(db, u.id, entity, entityId, 'dataset-export-started', null, null, { ...scopeDetail, expectedRows: expected });

	let rowsSent = 0;
	let ended = false;
	const meter = new Meter();
	const finish = (status: ExportOutcome['status'], error?: unknown) => {
		if (ended) return;
		ended = true;
		const outcome: ExportOutcome = { status, rows: rowsSent, bytes: meter.bytes, ...(error ? { error: String((error as Error)?.message ?? error).slice(0, 300) } : {}) };
		if (status === 'failed') console.error('[shellgate dataset export]', loggable(error));
		// After the producer has cleaned up (the zip's temporary manifests), so the outcome is final.
		settled
			.then(() => audit(db, u.id, entity, entityId, `dataset-export-${status}`, null, null, { ...scopeDetail, rows: outcome.rows, bytes: outcome.bytes, ...(outcome.error ? { error: outcome.error } : {}) }))
			.catch((e) => console.error('[shellgate dataset export] audit row not written:', loggable(e)))
			.finally(() => opts.onDone?.(outcome));
	};
	// An error of our own (database, file store) fails the export; anything else that stops the meter
	// is the download going away (the response body cancelled), which counts as cancelled.
	let sourceError: unknown = null;
	meter.on('end', () => finish('finished'));
	meter.on('error', (e) => (sourceError && !(sourceError instanceof ExportCancelled) ? finish('failed', sourceError) : finish('cancelled')));
	meter.on('close', () => finish('cancelled'));

	const rows = manifestRows(db, s, opts);
	let source: Readable;
	let settled: Promise<void> = Promise.resolve();
	const upstream: Readable[] = [];
	if (format === 'zip') {
		({ stream: source, settled } = zipStream(rows, () => rowsSent++));
	} else {
		async function* counted() {
			for await (const row of rows) {
				rowsSent++;
				yield format === 'jsonl' ? jsonLine(row) : row;
			}
		}
		const gen = Readable.from(counted(), { objectMode: true, highWaterMark: 16 });
		if (format === 'csv') {
			const csv = csvStringifier();
			gen.on('error', (e) => csv.destroy(e));
			upstream.push(gen);
			source = gen.pipe(csv);
		} else source = gen;
	}
	source.on('error', (e) => {
		sourceError = e;
		meter.destroy(e as Error);
	});
	// A cancelled download destroys the meter; the source (and the row reader behind it) stops with it.
	meter.on('close', () => {
		for (const st of [source, ...upstream]) st.destroy();
	});
	source.pipe(meter);
	return {
		body: Readable.toWeb(meter) as ReadableStream<Uint8Array>,
		fileName: `${s.fileBase}.${format}`,
		contentType: CONTENT_TYPES[format],
		expected
	};
}

/** The dataset's zip writer (zip64 headers once it holds more than 65,535 entries or 4 GiB: zip64.stress.test.ts). */
export function datasetArchive(): ZipArchive {
	// Meshes are binary floats: the fastest deflate level saves most of what any level would.
	return new ZipArchive({ zlib: { level: 1 } });
}

/**
 * The zip: each signed-off revision's stored bytes as `<part>/<part>-rev<N>.<format>`, then
 * `manifest.csv` and `manifest.jsonl`. The manifests are written to temporary files as the meshes
 * go out (so they describe exactly the files in this zip, even if sign-offs happen meanwhile) and
 * appended at the end; the files are removed afterwards whatever happens.
 */
function zipStream(rows: AsyncGenerator<ManifestRow>, onRow: () => void): { stream: Readable; settled: Promise<void> } {
	const archive = datasetArchive();
	const store = getStore();
	const tmp = path.join(config.dataDir, 'tmp');
	const id = randomUUID();
	const csvPath = path.join(tmp, `dataset-${id}.csv`);
	const jsonlPath = path.join(tmp, `dataset-${id}.jsonl`);
	const produce = async () => {
		await fs.mkdir(tmp, { recursive: true });
		const csvFile = createWriteStream(csvPath);
		const jsonlFile = createWriteStream(jsonlPath);
		const csv = csvStringifier();
		// Kept, not thrown from an event: the loop below checks it after every row.
		let fileError: unknown = null;
		for (const st of [csvFile, jsonlFile, csv]) st.on('error', (e: unknown) => (fileError ??= e));
		csv.pipe(csvFile);
		try {
			for await (const row of rows) {
				if (archive.destroyed) throw new ExportCancelled('the download was closed');
				if (fileError) throw fileError;
				const file = await store.stream(row.file_sha256).catch((e) => {
					throw new Error(`The stored file of ${row.part} revision ${row.revision} (sha256 ${row.file_sha256.slice(0, 12)}…) cannot be read: ${(e as Error).message}`);
				});
				await appendEntry(archive, file, row.zip_path);
				await writeWithPressure(csv, row);
				await writeWithPressure(jsonlFile, jsonLine(row));
				onRow();
			}
			csv.end();
			jsonlFile.end();
			await Promise.all([finished(csvFile), finished(jsonlFile)]);
			await appendEntry(archive, createReadStream(csvPath), 'manifest.csv');
			await appendEntry(archive, createReadStream(jsonlPath), 'manifest.jsonl');
			// Resolves only once the response has taken the last byte; not awaited, so a download
			// cancelled now cannot keep this function (and its temporary files) waiting. Errors reach
			// the archive's error event, which ends the response.
			archive.finalize().catch(() => {});
		} finally {
			csv.destroy();
			csvFile.destroy();
			jsonlFile.destroy();
			await rows.return(undefined);
			await fs.rm(csvPath, { force: true });
			await fs.rm(jsonlPath, { force: true });
		}
	};
	const settled = produce().catch((e) => {
		if (!archive.destroyed) archive.destroy(e instanceof Error ? e : new Error(String(e)));
	});
	return { stream: archive, settled };
}
