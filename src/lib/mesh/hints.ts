/** Plain-words hints about likely generator artefacts, from facts already measured. */
import type { EdgeTable } from './edges';
import type { Hint, HoleInfo, ShellInfo, Tolerances } from './report';

export interface HintInput {
	shells: ShellInfo[];
	/** All holes (not only the listed ones). */
	holes: HoleInfo[];
	area: number;
	faceQuality: Float64Array;
	skipFace: Uint8Array;
	indices: Uint32Array;
	edges: EdgeTable;
	shortEdges: number;
	tolerances: Tolerances;
}

function pct(share: number): string {
	return share < 0.001 ? `${(share * 100).toPrecision(2)} %` : `${(share * 100).toFixed(1)} %`;
}

export function buildHints(inp: HintInput): Hint[] {
	const hints: Hint[] = [];
	const tol = inp.tolerances;
	const total = inp.area > 0 ? inp.area : 1;

	// Tiny floating shells: every shell but the largest whose area share is below the threshold.
	if (inp.shells.length > 1) {
		let largest = 0;
		for (let s = 1; s < inp.shells.length; s++) if (inp.shells[s].area > inp.shells[largest].area) largest = s;
		let count = 0, area = 0;
		for (let s = 0; s < inp.shells.length; s++) {
			if (s === largest) continue;
			if (inp.shells[s].area / total < tol.smallShellAreaShare) {
				count++;
				area += inp.shells[s].area;
			}
		}
		if (count > 0) {
			hints.push({
				kind: 'floating-shells',
				message: `${count} small loose piece${count === 1 ? '' : 's'} float${count === 1 ? 's' : ''} apart from the main surface (${pct(area / total)} of the area together); implicit-surface generators leave such islands where the field dips below the iso-level. Removing them usually does no harm.`,
				count,
				areaShare: area / total
			});
		}
	}

	// Holes lying on a plane of the bounding box: the surface was cut by the sampling volume.
	const planes = new Map<string, number>();
	let clipped = 0, clippedPerimeter = 0;
	for (const h of inp.holes) {
		if (!h.onBboxPlane) continue;
		clipped++;
		clippedPerimeter += h.perimeter;
		planes.set(h.onBboxPlane, (planes.get(h.onBboxPlane) ?? 0) + 1);
	}
	if (clipped > 0) {
		const where = [...planes.keys()].sort().join(', ');
		hints.push({
			kind: 'clipped-by-bbox-plane',
			message: `${clipped} hole${clipped === 1 ? ' lies' : 's lie'} flat on the bounding box (${where}), total rim ${clippedPerimeter.toPrecision(4)} units: the shape was probably cut off by the generator's sampling volume. Enlarge the volume or cap the opening.`,
			count: clipped,
			areaShare: null
		});
	}

	// Clusters of slivers: sliver faces joined through shared edges, clusters of at least sliverClusterMin.
	{
		const q = inp.faceQuality, skip = inp.skipFace, indices = inp.indices;
		const triCount = q.length;
		const { edgeCount, edgeStart, heSorted } = inp.edges;
		const parent = new Int32Array(triCount);
		let slivers = 0;
		for (let t = 0; t < triCount; t++) {
			parent[t] = t;
			if (!skip[t] && q[t] < tol.sliverQuality) slivers++;
		}
		if (slivers >= tol.sliverClusterMin) {
			const find = (x: number): number => {
				while (parent[x] !== x) x = parent[x] = parent[parent[x]];
				return x;
			};
			for (let e = 0; e < edgeCount; e++) {
				const s = edgeStart[e], n = edgeStart[e + 1] - s;
				let first = -1;
				for (let i = 0; i < n; i++) {
					const f = (heSorted[s + i] / 3) | 0;
					if (q[f] >= tol.sliverQuality) continue;
					if (first < 0) first = f;
					else {
						const a = find(first), b = find(f);
						if (a !== b) parent[a < b ? b : a] = a < b ? a : b;
					}
				}
			}
			const size = new Uint32Array(triCount);
			for (let t = 0; t < triCount; t++) if (!skip[t] && q[t] < tol.sliverQuality) size[find(t)]++;
			let clusters = 0, inClusters = 0;
			for (let t = 0; t < triCount; t++) {
				if (size[t] >= tol.sliverClusterMin) {
					clusters++;
					inClusters += size[t];
				}
			}
			void indices;
			if (clusters > 0) {
				hints.push({
					kind: 'sliver-cluster',
					message: `${clusters} patch${clusters === 1 ? '' : 'es'} of needle-thin triangles (${inClusters} faces with radius ratio below ${tol.sliverQuality}); typical where marching cubes passes just by grid corners. Remeshing or vertex snapping there gives the solver better cells.`,
					count: clusters,
					areaShare: null
				});
			}
		}
	}

	if (inp.shortEdges > 0) {
		hints.push({
			kind: 'short-edges',
			message: `${inp.shortEdges} edge${inp.shortEdges === 1 ? ' is' : 's are'} shorter than the target length ${tol.minEdgeLength}; the volume mesher would have to resolve them or will fail near them.`,
			count: inp.shortEdges,
			areaShare: null
		});
	}

	let inverted = 0, invertedArea = 0;
	for (const s of inp.shells) {
		if (s.closed && s.manifold && s.consistentlyOriented && s.signedVolume < 0) {
			inverted++;
			invertedArea += s.area;
		}
	}
	if (inverted > 0) {
		hints.push({
			kind: 'inside-out',
			message: `${inverted} closed shell${inverted === 1 ? ' has' : 's have'} normals pointing inwards (negative volume); flip all faces of ${inverted === 1 ? 'it' : 'them'}, unless ${inverted === 1 ? 'it is' : 'they are'} meant as a cavity inside another shell.`,
			count: inverted,
			areaShare: invertedArea / total
		});
	}
	return hints;
}
