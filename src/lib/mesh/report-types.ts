/**
 * The inspection report's types: one plain JSON-serialisable object per mesh. Field meanings are
 * documented in README.md ("The inspection report"); keep the two in step. No imports, so every
 * engine module can use these types without an import cycle.
 */

export const ENGINE_VERSION = '0.2.0';

export type Vec3 = [number, number, number];

/** Axis-aligned box. An empty mesh gives min = max = [0, 0, 0]. */
export interface Bbox {
	min: Vec3;
	max: Vec3;
}

/** Bin counts over ascending bin boundaries: counts[i] covers [bins[i], bins[i + 1]). */
export interface Histogram {
	/** What is measured, in words, e.g. 'edge length (model units), log-spaced bins'. */
	measure: string;
	/** counts.length + 1 ascending boundaries; the last bin includes its upper boundary. */
	bins: number[];
	counts: number[];
}

/** Which face of the mesh bounding box a hole lies on, if any. */
export type BboxPlane = 'x-min' | 'x-max' | 'y-min' | 'y-max' | 'z-min' | 'z-max';

/** One closed loop of boundary edges (a hole). */
export interface HoleInfo {
	edgeCount: number;
	/** Sum of the loop's edge lengths, model units. */
	perimeter: number;
	/**
	 * Area the rim encloses: the magnitude of its vector area, ½ |Σ (vᵢ − v₀) × (vᵢ₊₁ − v₀)| (exact for
	 * a planar rim). 0 for a slit whose two sides lie on each other, as where a vertex sits in the
	 * middle of a neighbouring face's edge (a T-junction); 2 × area / perimeter is a slit's width.
	 */
	area: number;
	/** Mean of the loop's vertex positions (each loop corner once). */
	centroid: Vec3;
	bbox: Bbox;
	/** Set when every loop vertex lies on one plane of the mesh bounding box (within tolerances.planeRel × diagonal). */
	onBboxPlane: BboxPlane | null;
	/** Shell (index into `shells`) the loop belongs to. */
	shell: number;
	/** Rim vertices where the rim turns by more than 10° (a square opening has 4). */
	corners: number;
	/** Share of rim vertices where the rim runs straight on (turns by less than 0.5°). */
	straightShare: number;
	/** Spread of the rim's edge lengths: standard deviation over mean (0 for equal edges). */
	edgeLengthSpread: number;
}

/**
 * What the topology would be after an exact weld of vertices at identical positions (indexed
 * formats only; nothing moves). Present only when the file has such vertices.
 */
export interface ExactWeldPreview {
	/** Vertices that share their exact position with an earlier vertex (= duplicatePositions). */
	coincidentVertices: number;
	boundaryEdges: number;
	boundaryLoops: number;
	shells: number;
	nonManifoldEdges: number;
	/** Sum of shell genera after the weld, null where a shell is non-manifold or non-orientable. */
	genus: number | null;
	watertight: boolean;
}

/** One connected shell: faces connected through shared edges (non-manifold edges connect too). */
export interface ShellInfo {
	faces: number;
	/** Distinct vertices referenced by the shell's faces. */
	vertices: number;
	edges: number;
	boundaryEdges: number;
	boundaryLoops: number;
	/** No boundary edges. */
	closed: boolean;
	/** No non-manifold edges and no non-manifold vertices in this shell. */
	manifold: boolean;
	orientable: boolean;
	/** Every interior edge of the shell is used once in each direction. */
	consistentlyOriented: boolean;
	/** Fewest faces of this shell to flip to make it consistent (see README for non-orientable shells). */
	flippedFaces: number;
	/** V − E + F of this shell. */
	eulerCharacteristic: number;
	/** (2 − χ − b) / 2, or null when the shell is non-manifold or non-orientable. */
	genus: number | null;
	/** Raw divergence-theorem sum, positive when normals point outwards; meaningful only if closed. */
	signedVolume: number;
	/** Enclosed volume: signedVolume when the shell is closed, manifold and consistently oriented, else null. */
	volume: number | null;
	area: number;
	bbox: Bbox;
}

/** 'open': some shell has boundary edges; 'non-manifold': some edge or vertex is non-manifold;
 * 'inconsistent-orientation': some interior edge is used twice in the same direction. */
export type VolumeUndefinedReason = 'open' | 'non-manifold' | 'inconsistent-orientation';

/** Plain words for a VolumeUndefinedReason, e.g. "the surface is open". */
export function volumeReasonText(reason: VolumeUndefinedReason | null): string {
	return reason === 'non-manifold' ? 'the surface is non-manifold' : reason === 'inconsistent-orientation' ? 'the faces are not consistently oriented' : 'the surface is open';
}

export interface FlowProjection {
	/** Unit flow direction the silhouette is taken along. */
	direction: Vec3;
	/** Silhouette (frontal) area seen along the direction, model units². */
	area: number;
	/** Bound on |area − true silhouette area| from the rasterisation (see README). */
	errorBound: number;
	/** How the area was computed, in words. */
	method: string;
}

export interface ProjectedArea {
	/** Silhouette area seen along the x axis (projected on the y-z plane); likewise y and z. */
	x: number;
	y: number;
	z: number;
	/** Error bounds for x, y, z, in the same order. */
	errorBounds: Vec3;
	flow: FlowProjection;
}

export type HintKind =
	| 'unwelded-seams'
	| 'floating-shells'
	| 'separate-bodies'
	| 'overlapping-bodies'
	| 'flat-surface'
	| 'clipped-by-bbox-plane'
	| 'openings'
	| 'zero-width-openings'
	| 'sliver-cluster'
	| 'short-edges'
	| 'inside-out';

/** A likely generator artefact, in plain words. */
export interface Hint {
	kind: HintKind;
	message: string;
	/** How many items (shells, holes, faces, edges) the hint is about. */
	count: number;
	/** Share of the total surface area involved, 0..1, where meaningful; else null. */
	areaShare: number | null;
}

export interface SelfIntersectionSample {
	a: number;
	b: number;
	point: Vec3;
	/** Shells (indices into `shells`) of faces a and b: different where separate bodies pass into each other. */
	shells: [number, number];
}

export interface Tolerances {
	/** Planarity tolerance for `onBboxPlane`, relative to the bbox diagonal. */
	planeRel: number;
	/** Faces with quality below this count as slivers for hints. */
	sliverQuality: number;
	/** Shells below this share of total area (and not the largest) count as small floating shells. */
	smallShellAreaShare: number;
	/** …and below this share of the faces; removal is advised only while together they stay below smallShellAreaShare. */
	smallShellFaceShare: number;
	/** Minimum number of slivers connected through edges that makes a "cluster". */
	sliverClusterMin: number;
	/** Threshold for `shortEdges`; 0 when no minEdgeLength option was given. */
	minEdgeLength: number;
	/** Raster resolution (cells along the longer side) for projected areas. */
	rasterCells: number;
	/** Hole list cap: the largest (by perimeter) this many are listed; all are counted. */
	maxHolesListed: number;
}

/** The thinnest wall or the narrowest gap: where it is measured and what it measures. */
export interface WallGapFinding {
	/** Model units, and in target cells. */
	value: number;
	cells: number;
	/** The measured face, the face its ray met, and the two ends of that ray. */
	face: number;
	otherFace: number;
	from: Vec3;
	to: Vec3;
}

/** An edge-connected group of faces under the wall or gap threshold. */
export interface WallGapRegion {
	faces: number;
	area: number;
	centroid: Vec3;
	/** Smallest value in the group, model units and cells, and its face. */
	min: number;
	minCells: number;
	minFace: number;
}

/**
 * Walls, gaps, edge lengths and feature edges against the target cell size (thickness.ts).
 * Present when the inspection was given a cell size (every check of a project is); null otherwise.
 */
export interface CellSizeChecks {
	cellSize: number;
	/** Walls and gaps under this many cells are flagged. */
	thinCells: number;
	/** Rays stop here (model units); a wall or gap wider than this reads "none within range". */
	range: number;
	/** null: no wall (or gap) within range. */
	thinnestWall: WallGapFinding | null;
	narrowestGap: WallGapFinding | null;
	thinWallFaces: number;
	thinWallArea: number;
	narrowGapFaces: number;
	narrowGapArea: number;
	/** Faces per band of one cell, [i, i + 1) cells for i < bins; `beyond` up to the range; `noHit` nothing within range. */
	wallHistogram: { counts: number[]; beyond: number; noHit: number };
	gapHistogram: { counts: number[]; beyond: number; noHit: number };
	/** Largest first (by area), at most 20 each; the counts are before the cap. */
	wallRegions: WallGapRegion[];
	wallRegionCount: number;
	gapRegions: WallGapRegion[];
	gapRegionCount: number;
	longestEdge: number;
	/** Faces with an edge longer than longEdgeCells cells, and their share of the area. */
	longEdgeCells: number;
	coarseFaces: number;
	coarseAreaShare: number;
	/** Edges where the faces meet at more than featureAngleDeg. */
	featureAngleDeg: number;
	sharpEdges: number;
	ms: number;
}

export interface InspectionReport {
	engineVersion: string;
	format: string;
	fileName: string;
	vertices: number;
	faces: number;
	edges: number;
	weldedVertices: number;
	duplicatePositions: number;
	/** Topology after welding the duplicate positions exactly; null when there are none. */
	exactWeld: ExactWeldPreview | null;
	polygonsSplit: number;
	regions: { name: string; faces: number }[];

	boundaryEdges: number;
	boundaryLoops: number;
	holes: HoleInfo[];
	nonManifoldEdges: number;
	nonManifoldVertices: number;
	orientable: boolean;
	consistentlyOriented: boolean;
	flippedFaces: number;
	components: number;
	shells: ShellInfo[];
	eulerCharacteristic: number;
	genus: number | null;
	watertight: boolean;

	/** null when the self-intersection stage was skipped. */
	selfIntersectingPairs: number | null;
	selfIntersectionSample: SelfIntersectionSample[];

	degenerateFaces: number;
	duplicateFaces: number;
	minEdgeLength: number;
	maxEdgeLength: number;
	shortEdges: number;
	edgeLengthHistogram: Histogram;
	faceQualityHistogram: Histogram;

	bbox: Bbox;
	area: number;
	/** Enclosed volume; null unless every shell is closed, manifold and consistently oriented. */
	volume: number | null;
	/** Why volume (and wettedArea) is null; null when they are defined. */
	volumeUndefinedReason: VolumeUndefinedReason | null;
	projectedArea: ProjectedArea;
	/** Area of the closed shells; null exactly when volume is null. */
	wettedArea: number | null;

	hints: Hint[];
	/** Walls, gaps and edges against the target cell size; null when no cell size was given. */
	cellSizeChecks: CellSizeChecks | null;
	/** Milliseconds per stage. */
	timings: Record<string, number>;
	tolerances: Tolerances;
	/**
	 * For a revision of an iterations run: its shape distance from the previous iteration's surface
	 * (shape-distance.ts). Absent for every other check.
	 */
	iterationDistance?: IterationDistance;
}

/** Hausdorff and chamfer distance (model units) to the previous iteration, or why there is none. */
export interface IterationDistance {
	previousRevisionId: number;
	previousIteration: number | null;
	hausdorff: number | null;
	chamfer: number | null;
	/** Samples per surface. */
	samples: number;
	/** Set when the distance could not be measured (e.g. the previous file is unreadable). */
	error: string | null;
	ms: number;
}

export interface InspectOptions {
	/** Flow direction for the frontal area; normalised. Default [1, 0, 0]. */
	flowDirection?: Vec3;
	/** Edges shorter than this are counted in `shortEdges`. Default 0 (none counted). */
	minEdgeLength?: number;
	/** Refuse meshes with more triangles than this. Default DEFAULT_MAX_FACES. */
	maxFaces?: number;
	/** Skip the self-intersection stage (selfIntersectingPairs becomes null). */
	skipSelfIntersections?: boolean;
	/** Cap on selfIntersectionSample length. Default 100. */
	sampleLimit?: number;
	/** Raster cells along the longer side of each projection. Default 128 (outline cells are sampled again on 32 × 32 sub-cells). */
	rasterCells?: number;
	/** Name shown in the report. */
	fileName?: string;
	/** Target cell size (model units): turns on the wall, gap, long-edge and feature-edge checks. */
	cellSize?: number;
	/** Walls and gaps under this many cells are flagged. Default 2. */
	thinCells?: number;
	/** Unit of the coordinates (e.g. the project's "mm"), written after lengths in hint texts. Default "units". */
	units?: string;
}

/** What the self-intersection stage hands over (same shape as self-intersect.ts returns). */
export interface SelfIntersectionInput {
	pairs: number;
	sample: { a: number; b: number; point: [number, number, number] }[];
	degenerateSkipped: number;
	ms: number;
}

export interface BuildReportOptions extends InspectOptions {
	/** Result of the self-intersection stage; null or absent → selfIntersectingPairs: null. */
	selfIntersections?: SelfIntersectionInput | null;
	/** Stage timings measured by the caller (reading, …), merged into `timings`. */
	timings?: Record<string, number>;
	/** Called as each stage starts, with the share of the analysis done so far (0..100). */
	onProgress?: (stage: string, percent: number) => void;
	/** Precomputed collapsed-face mask (faces with a repeated vertex index). */
	collapsed?: { mask: Uint8Array; count: number };
}
