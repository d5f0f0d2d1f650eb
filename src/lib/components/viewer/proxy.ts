/**
 * Coarse stand-in for a large mesh, drawn only while the camera moves: vertex clustering on a
 * regular grid (Rossignac & Borrel 1993). Each grid cell's vertices collapse to their mean;
 * triangles whose corners fall in fewer than three cells are dropped. O(V + F), one Map over
 * occupied cells. Topology is not kept; the stand-in is for looking only, never for picking.
 */
import { pointBounds } from '$lib/mesh/bounds';

export interface ProxyMesh {
	positions: Float32Array;
	indices: Uint32Array;
}

export function clusterProxy(positions: Float32Array, indices: Uint32Array, targetTris: number): ProxyMesh | null {
	const triCount = (indices.length / 3) | 0;
	const vertCount = (positions.length / 3) | 0;
	if (triCount <= targetTris || vertCount === 0) return null;
	const [x0, y0, z0, x1, y1] = pointBounds(positions);
	// Mean edge length from a strided sample sets the cell: triangle count scales with 1 / cell².
	let sum = 0, n = 0;
	const stride = Math.max(1, Math.floor(triCount / 2000));
	for (let t = 0; t < triCount; t += stride) {
		const a3 = 3 * indices[3 * t], b3 = 3 * indices[3 * t + 1];
		sum += Math.hypot(positions[b3] - positions[a3], positions[b3 + 1] - positions[a3 + 1], positions[b3 + 2] - positions[a3 + 2]);
		n++;
	}
	const edge = n ? sum / n : 0;
	if (!(edge > 0)) return null;
	const cell = edge * Math.sqrt(triCount / targetTris);
	const nx = Math.max(1, Math.ceil((x1 - x0) / cell) + 1), ny = Math.max(1, Math.ceil((y1 - y0) / cell) + 1);
	const cellOf = new Uint32Array(vertCount);
	const ids = new Map<number, number>();
	const acc: number[] = [];
	for (let v = 0; v < vertCount; v++) {
		const x = positions[3 * v], y = positions[3 * v + 1], z = positions[3 * v + 2];
		const key = Math.floor((x - x0) / cell) + nx * (Math.floor((y - y0) / cell) + ny * Math.floor((z - z0) / cell));
		let id = ids.get(key);
		if (id === undefined) {
			id = ids.size;
			ids.set(key, id);
			acc.push(0, 0, 0, 0);
		}
		cellOf[v] = id;
		acc[4 * id] += x;
		acc[4 * id + 1] += y;
		acc[4 * id + 2] += z;
		acc[4 * id + 3]++;
	}
	const clusters = ids.size;
	const outPos = new Float32Array(3 * clusters);
	for (let c = 0; c < clusters; c++) {
		const k = acc[4 * c + 3];
		outPos[3 * c] = acc[4 * c] / k;
		outPos[3 * c + 1] = acc[4 * c + 1] / k;
		outPos[3 * c + 2] = acc[4 * c + 2] / k;
	}
	const out = new Uint32Array(indices.length);
	let m = 0;
	for (let t3 = 0; t3 < indices.length; t3 += 3) {
		const a = cellOf[indices[t3]], b = cellOf[indices[t3 + 1]], c = cellOf[indices[t3 + 2]];
		if (a === b || b === c || a === c) continue;
		out[m++] = a;
		out[m++] = b;
		out[m++] = c;
	}
	return { positions: outPos, indices: out.slice(0, m) };
}
