/**
 * Wall thickness and gap width against the cell size, per vertex, for the viewer's colouring: the
 * same rays as the report (thickness.ts faceDistancesBoth), then each vertex takes the smallest
 * value of its faces, in cells. Nothing within range reads the range (maxDistance / cellSize).
 */
import { faceDistancesBoth } from '$lib/mesh/thickness';
import type { CellFieldReply, CellFieldRequest } from './protocol';

const post = (msg: CellFieldReply, transfer: Transferable[] = []) => (self as unknown as Worker).postMessage(msg, transfer);

self.onmessage = (ev: MessageEvent<CellFieldRequest>) => {
	const req = ev.data;
	if (req?.type !== 'cell-field') return;
	try {
		const t0 = performance.now();
		const mesh = { positions: Float64Array.from(req.positions), indices: req.indices };
		const { thickness, gap } = faceDistancesBoth(mesh, { cellSize: req.cellSize, maxDistance: req.maxDistance });
		const n = (req.positions.length / 3) | 0;
		const maxCells = req.maxDistance / req.cellSize;
		const perVertex = (faceValue: Float64Array | Float32Array) => {
			const out = new Float32Array(n).fill(maxCells);
			const idx = req.indices;
			for (let t = 0; t < faceValue.length; t++) {
				const v = faceValue[t];
				if (!(v < Infinity)) continue;
				const c = v / req.cellSize;
				for (let k = 0; k < 3; k++) {
					const i = idx[3 * t + k];
					if (c < out[i]) out[i] = c;
				}
			}
			return out;
		};
		const wall = perVertex(thickness.value), gp = perVertex(gap.value);
		post({ type: 'result', wall, gap: gp, maxCells, ms: performance.now() - t0 }, [wall.buffer, gp.buffer]);
	} catch (e) {
		post({ type: 'error', message: e instanceof Error ? e.message : String(e) });
	}
};
