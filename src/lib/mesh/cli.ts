/**
 * `npm run -s inspect -- FILE [--json] [--flow x,y,z] [--min-edge L] [--cell-size H] [--max-faces N] [--threads N] [--worker-min-faces N] [--alongside-min-faces N] [--no-self-intersections]`
 * Prints a readable summary, or one JSON report on stdout with --json. Exit 0 when the file was
 * read and inspected, 2 with the message on stderr when not.
 */
import { readFileSync, writeSync } from 'node:fs';
import { isMainThread } from 'node:worker_threads';
import { inspectFileNode, SELF_INTERSECT_ALONGSIDE_MIN_FACES, type InspectNodeOptions } from './inspect-node';
import { volumeReasonText, type InspectionReport, type Vec3 } from './report-types';

const USAGE = 'usage: npm run -s inspect -- FILE [--json] [--flow x,y,z] [--min-edge L] [--cell-size H] [--max-faces N] [--threads N] [--worker-min-faces N] [--alongside-min-faces N] [--no-self-intersections]';

class UsageError extends Error {}

function parseArgs(argv: string[]): { file: string; json: boolean; opts: InspectNodeOptions } {
	let file: string | null = null;
	let json = false;
	const opts: InspectNodeOptions = { alongsideMinFaces: SELF_INTERSECT_ALONGSIDE_MIN_FACES };
	const num = (flag: string, v: string | undefined): number => {
		const n = Number(v);
		if (v === undefined || v.trim() === '' || !Number.isFinite(n)) throw new UsageError(`${flag} needs a number, got ${v === undefined ? 'nothing' : `'${v}'`}`);
		return n;
	};
	for (let i = 0; i < argv.length; i++) {
		const a = argv[i];
		if (a === '--json') json = true;
		else if (a === '--no-self-intersections') opts.skipSelfIntersections = true;
		else if (a === '--flow') {
			const parts = (argv[++i] ?? '').split(',');
			if (parts.length !== 3) throw new UsageError(`--flow needs three comma-separated numbers, e.g. --flow 1,0,0`);
			opts.flowDirection = parts.map((p) => num('--flow', p)) as Vec3;
		} else if (a === '--min-edge') opts.minEdgeLength = num('--min-edge', argv[++i]);
		else if (a === '--cell-size') opts.cellSize = num('--cell-size', argv[++i]);
		else if (a === '--max-faces') opts.maxFaces = num('--max-faces', argv[++i]);
		else if (a === '--threads') opts.threads = num('--threads', argv[++i]);
		else if (a === '--worker-min-faces') opts.workerMinFaces = num('--worker-min-faces', argv[++i]);
		else if (a === '--alongside-min-faces') opts.alongsideMinFaces = num('--alongside-min-faces', argv[++i]);
		else if (a === '--help' || a === '-h') throw new UsageError(USAGE);
		else if (a.startsWith('--')) throw new UsageError(`unknown option ${a}\n${USAGE}`);
		else if (file === null) file = a;
		else throw new UsageError(`only one file at a time (got '${file}' and '${a}')`);
	}
	if (file === null) throw new UsageError(USAGE);
	return { file, json, opts };
}

const fmt = (x: number) => (Number.isInteger(x) ? String(x) : x.toPrecision(6));
const yes = (b: boolean) => (b ? 'yes' : 'no');

export function summary(r: InspectionReport): string {
	const lines: string[] = [];
	lines.push(`${r.fileName}  (${r.format}, engine ${r.engineVersion})`);
	lines.push(`  ${r.vertices} vertices, ${r.faces} faces, ${r.edges} edges, ${r.components} shell${r.components === 1 ? '' : 's'}`);
	if (r.weldedVertices || r.duplicatePositions || r.polygonsSplit) {
		lines.push(`  reading: ${r.weldedVertices} vertices welded, ${r.duplicatePositions} duplicate positions, ${r.polygonsSplit} polygons split`);
	}
	lines.push(`  watertight: ${yes(r.watertight)}   boundary edges ${r.boundaryEdges} in ${r.boundaryLoops} loop${r.boundaryLoops === 1 ? '' : 's'}`);
	lines.push(`  non-manifold edges ${r.nonManifoldEdges}, non-manifold vertices ${r.nonManifoldVertices}`);
	lines.push(`  orientable: ${yes(r.orientable)}   consistently oriented: ${yes(r.consistentlyOriented)}   faces to flip ${r.flippedFaces}`);
	lines.push(`  Euler characteristic ${r.eulerCharacteristic}   genus ${r.genus === null ? 'undefined (non-manifold or non-orientable shell)' : r.genus}`);
	lines.push(`  self-intersecting face pairs: ${r.selfIntersectingPairs === null ? 'not checked' : r.selfIntersectingPairs}`);
	lines.push(`  degenerate faces ${r.degenerateFaces}, duplicate faces ${r.duplicateFaces}`);
	lines.push(`  edge length ${fmt(r.minEdgeLength)} .. ${fmt(r.maxEdgeLength)}${r.tolerances.minEdgeLength > 0 ? `, ${r.shortEdges} shorter than ${r.tolerances.minEdgeLength}` : ''}`);
	lines.push(`  bbox [${r.bbox.min.map(fmt).join(', ')}] .. [${r.bbox.max.map(fmt).join(', ')}]`);
	if (r.volume === null || r.wettedArea === null) lines.push(`  area ${fmt(r.area)}, volume and wetted area not defined: ${volumeReasonText(r.volumeUndefinedReason)}`);
	else lines.push(`  area ${fmt(r.area)}, volume ${fmt(r.volume)}, wetted area ${fmt(r.wettedArea)}`);
	const f = r.projectedArea.flow;
	lines.push(`  frontal area along [${f.direction.map(fmt).join(', ')}]: ${fmt(f.area)} ± ${fmt(f.errorBound)}`);
	for (const h of r.holes.slice(0, 5)) {
		lines.push(`  hole: ${h.edgeCount} edges, rim ${fmt(h.perimeter)}, centre [${h.centroid.map(fmt).join(', ')}]${h.onBboxPlane ? `, on bbox ${h.onBboxPlane}` : ''}`);
	}
	if (r.holes.length > 5) lines.push(`  … ${r.boundaryLoops - 5} more holes`);
	const c = r.cellSizeChecks;
	if (c) {
		const f = (x: { value: number; cells: number } | null) => (x ? `${fmt(x.value)} (${fmt(x.cells)} cells)` : `none within ${fmt(c.range)}`);
		lines.push(`  cell ${fmt(c.cellSize)}: thinnest wall ${f(c.thinnestWall)}, narrowest gap ${f(c.narrowestGap)}; ${c.thinWallFaces} faces on walls and ${c.narrowGapFaces} at gaps under ${c.thinCells} cells`);
		lines.push(`  longest edge ${fmt(c.longestEdge)} (${fmt(c.longestEdge / c.cellSize)} cells); ${c.sharpEdges} sharp edges over ${c.featureAngleDeg}°`);
	}
	for (const h of r.hints) lines.push(`  hint: ${h.message}`);
	const t = Object.entries(r.timings).map(([k, v]) => `${k} ${Math.round(v)}`).join(', ');
	lines.push(`  ms: ${t}`);
	return lines.join('\n');
}

async function main(): Promise<number> {
	let args: ReturnType<typeof parseArgs>;
	try {
		args = parseArgs(process.argv.slice(2));
	} catch (e) {
		process.stderr.write(`${(e as Error).message}\n`);
		return 2;
	}
	let bytes: Uint8Array;
	try {
		bytes = readFileSync(args.file);
	} catch (e) {
		const code = (e as NodeJS.ErrnoException).code;
		process.stderr.write(`cannot open '${args.file}': ${code === 'ENOENT' ? 'no such file' : (e as Error).message}\n`);
		return 2;
	}
	try {
		const r = await inspectFileNode(bytes, args.file, args.opts);
		const text = args.json ? `${JSON.stringify(r)}\n` : `${summary(r)}\n`;
		writeAll(1, text);
		return 0;
	} catch (e) {
		process.stderr.write(`${(e as Error).message}\n`);
		return 2;
	}
}

/**
 * Hands every byte to the OS before returning, whatever the reader's pace: a pipe set non-blocking
 * answers EAGAIN when full, so wait a moment and go on. A stream write could still be pending
 * when the process ends, and a slow pipe reader would then get a cut report.
 */
function writeAll(fd: number, text: string): void {
	const buf = Buffer.from(text, 'utf8');
	const pause = new Int32Array(new SharedArrayBuffer(4));
	let off = 0;
	while (off < buf.length) {
		try {
			off += writeSync(fd, buf, off, buf.length - off);
		} catch (e) {
			if ((e as NodeJS.ErrnoException).code !== 'EAGAIN') throw e;
			Atomics.wait(pause, 0, 0, 5);
		}
	}
}

// Only the main thread runs the command (the built command line's worker threads load the
// workers bundle, scripts/build-cli.mjs). Set the exit code and let Node leave once stdout has
// drained; process.exit() would cut a piped report short.
if (isMainThread) {
	main().then((code) => {
		process.exitCode = code;
	});
}
