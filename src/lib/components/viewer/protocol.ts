/** Messages between the viewer and its workers. Every typed array in a reply is transferred, not copied. */
import type { MeshOverlays } from '$lib/mesh/overlays';
import type { InspectionReport } from '$lib/mesh/report';
import type { OverlayDraw } from './overlay-draw';

/** Largest mesh the browser view loads; the report still shows above this. */
export const VIEWER_MAX_FACES = 6_000_000;
/** Meshes above this many triangles are drawn first from the file's own triangles, get a stand-in for orbiting and their picking tree last. */
export const PROXY_ABOVE = 300_000;

export interface LoadRequest {
	type: 'load';
	url: string;
	fileName: string;
	/** Threshold for the short-edge overlay, model units; 0 lists none. */
	minEdgeLength: number;
	/** Self-intersection sample and tolerances come from here; null computes overlays without them. */
	report: InspectionReport | null;
	maxFaces: number;
	/** false: mesh only (a compare revision needs no overlays). Default true. */
	overlays?: boolean;
	/** The file's bytes when the page fetched them (then url is not fetched again), and how long that took. */
	bytes?: Uint8Array;
	fetchMs?: number;
}

export type LoadFailure = 'fetch' | 'read' | 'too-large' | 'memory';

/** Serialised three-mesh-bvh tree (MeshBVH.serialize, indirect so triangle ids stay ours). */
export interface BvhData {
	version: number;
	roots: ArrayBuffer[];
	index: Uint32Array | null;
	indirectBuffer: Uint32Array | null;
}

export type LoadReply =
	| { type: 'progress'; loaded: number; total: number | null }
	| { type: 'parsing' }
	| {
			type: 'mesh';
			positions: Float32Array;
			indices: Uint32Array;
			/** Small meshes: the picking tree comes with the mesh; large ones get it in a 'bvh' message after the overlays. */
			bvh: BvhData | null;
			fetchMs: number;
			parseMs: number;
			bvhMs: number;
			bytes: number;
	  }
	/** Coarse stand-in drawn while the camera moves (large meshes only). */
	| { type: 'proxy'; positions: Float32Array; indices: Uint32Array; ms: number }
	| { type: 'overlays'; overlays: MeshOverlays; draw: OverlayDraw; ms: number; drawMs: number }
	| { type: 'bvh'; bvh: BvhData; ms: number }
	| { type: 'error'; kind: LoadFailure; message: string };

export interface DeviationRequest {
	type: 'deviation';
	/** Vertices measured (3 per vertex), and their faces (3 per face: each face's centre is measured too). */
	positions: Float32Array;
	indices: Uint32Array;
	/** Surface measured against. */
	targetPositions: Float32Array;
	targetIndices: Uint32Array;
}

export type DeviationReply =
	| { type: 'progress'; done: number; total: number }
	| { type: 'result'; distances: Float32Array; faceDistances: Float32Array; max: number; mean: number; ms: number }
	| { type: 'error'; message: string };

/** Wall thickness and gap width per vertex in target cells (thickness.ts rays, run in a worker). */
export interface CellFieldRequest {
	type: 'cell-field';
	positions: Float32Array;
	indices: Uint32Array;
	cellSize: number;
	/** Rays stop here (model units); a vertex with nothing within reads maxDistance / cellSize. */
	maxDistance: number;
}

export type CellFieldReply =
	| { type: 'result'; wall: Float32Array; gap: Float32Array; maxCells: number; ms: number }
	| { type: 'error'; message: string };
