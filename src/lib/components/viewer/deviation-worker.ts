/**
 * Distance from each vertex of one surface to the other surface: closest point through a
 * three-mesh-bvh tree over the target (indirect, so the target's triangle order is untouched).
 * O(V log F). The maximum over vertices is the one-sided Hausdorff distance sampled at vertices.
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
		const p = req.positions;
		const n = (p.length / 3) | 0;
		const distances = new Float32Array(n);
		const q = new Vector3();
		const hit = { point: new Vector3(), distance: 0, faceIndex: 0 } as HitPointInfo;
		let max = 0, sum = 0, last = performance.now();
		for (let v = 0; v < n; v++) {
			q.set(p[3 * v], p[3 * v + 1], p[3 * v + 2]);
			const r = bvh.closestPointToPoint(q, hit);
			const d = r ? r.distance : 0;
			distances[v] = d;
			if (d > max) max = d;
			sum += d;
			if ((v & 4095) === 0 && performance.now() - last > 100) {
				post({ type: 'progress', done: v, total: n });
				last = performance.now();
			}
		}
		post({ type: 'result', distances, max, mean: n > 0 ? sum / n : 0, ms: performance.now() - t0 }, [distances.buffer]);
	} catch (e) {
		post({ type: 'error', message: `Deviation could not be computed: ${(e as Error).message}` });
	}
};
