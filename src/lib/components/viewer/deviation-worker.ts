/**
 * Distance from each vertex and from each face's centre of one surface to the other surface:
 * closest point through a three-mesh-bvh tree over the target (indirect, so the target's triangle
 * order is untouched). O((V + F) log F). The maximum over both is the one-sided Hausdorff distance
 * sampled at vertices and face centres, the samples the server's repair deviation also takes
 * (src/lib/mesh/repair/deviation.ts): a hole filled from its rim's vertices alone moves no vertex,
 * and only the centres of the new faces show how far the surface moved.
 */
import { BufferAttribute, BufferGeometry, Vector3 } from 'three';
import { computeBoundsTree, type HitPointInfo, type MeshBVH } from 'three-mesh-bvh';
import type { DeviationReply, DeviationRequest } from './protocol';

BufferGeometry.prototype.computeBoundsTree = computeBoundsTree;

const post = (msg: DeviationReply, transfer: Transferable[] = []) => (self as unknown as Worker).postMessage(msg, transfer);

self.onmessage = (ev: MessageEvent<DeviationRequest>) => {
	const req = ev.data;
	if (req?.type !== 'deviation') return;
	try {
		const t0 = performance.now();
		const target = new BufferGeometry();
		target.setAttribute('position', new BufferAttribute(req.targetPositions, 3));
		target.setIndex(new BufferAttribute(req.targetIndices, 1));
		target.computeBoundsTree({ indirect: true });
		const bvh = target.boundsTree as MeshBVH;
		const p = req.positions, ix = req.indices;
		const n = (p.length / 3) | 0;
		const f = (ix.length / 3) | 0;
		const distances = new Float32Array(n);
		const faceDistances = new Float32Array(f);
		const q = new Vector3();
		const hit = { point: new Vector3(), distance: 0, faceIndex: 0 } as HitPointInfo;
		let max = 0, sum = 0, last = performance.now();
		const total = n + f;
		for (let s = 0; s < total; s++) {
			if (s < n) q.set(p[3 * s], p[3 * s + 1], p[3 * s + 2]);
			else {
				const t = 3 * (s - n), a = 3 * ix[t], b = 3 * ix[t + 1], c = 3 * ix[t + 2];
				q.set((p[a] + p[b] + p[c]) / 3, (p[a + 1] + p[b + 1] + p[c + 1]) / 3, (p[a + 2] + p[b + 2] + p[c + 2]) / 3);
			}
			const r = bvh.closestPointToPoint(q, hit);
			const d = r ? r.distance : 0;
			if (s < n) distances[s] = d;
			else faceDistances[s - n] = d;
			if (d > max) max = d;
			sum += d;
			if ((s & 4095) === 0 && performance.now() - last > 100) {
				post({ type: 'progress', done: s, total });
				last = performance.now();
			}
		}
		post({ type: 'result', distances, faceDistances, max, mean: total > 0 ? sum / total : 0, ms: performance.now() - t0 }, [distances.buffer, faceDistances.buffer]);
	} catch (e) {
		post({ type: 'error', message: `Deviation could not be computed: ${(e as Error).message}` });
	}
};
