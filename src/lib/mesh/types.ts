/**
 * Shared shapes of the inspection engine. Everything here is plain data over flat typed arrays so
 * it can cross a worker boundary (structured clone / transfer) and run in Node, a worker or a browser.
 */

/** Triangle mesh. Vertex v: positions[3v..3v+2]. Triangle t: indices[3t..3t+2], CCW seen from outside. */
export interface MeshBuffers {
	positions: Float64Array;
	indices: Uint32Array;
}

export type MeshFormat = 'stl-binary' | 'stl-ascii' | 'ply-ascii' | 'ply-binary-le' | 'ply-binary-be' | 'obj';

/** A named group of faces (OBJ `o`/`g`, or one `solid` of a multi-solid ASCII STL): CFD patches. */
export interface MeshRegion {
	name: string;
	/** First triangle of the region and how many follow it (regions are contiguous runs). */
	firstFace: number;
	faceCount: number;
}

/** What reading and normalising the file changed or noticed, before any analysis. */
export interface ReadStats {
	/**
	 * STL only: corner records merged away by the exact-equality weld (−0 treated as +0), i.e.
	 * 3 × triangles read minus distinct vertices; a closed cube gives 36 − 8 = 28. Polygon facets of
	 * ASCII STL add their fan copies to the corner count.
	 */
	weldedVertices: number;
	/** Indexed formats (PLY, OBJ): vertex indices whose exact position an earlier index already has (not merged). */
	duplicatePositions: number;
	/** Polygons with more than three corners that were fan-triangulated. */
	polygonsSplit: number;
	/** Faces declared in the header (PLY) or counted in the file, before triangulation. */
	facesDeclared: number;
	/** Statements skipped because the engine does not use them (OBJ vt, vn, usemtl, …). */
	skippedStatements: number;
}

export interface ParsedMesh extends MeshBuffers {
	format: MeshFormat;
	regions: MeshRegion[];
	stats: ReadStats;
}

export interface ReadOptions {
	/** Refuse files that declare or hold more triangles than this, before allocating. Default 20 million. */
	maxFaces?: number;
}

/** A reader's refusal: a message a person can act on, saying what is wrong and where. */
export class MeshReadError extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'MeshReadError';
	}
}

export const DEFAULT_MAX_FACES = 20_000_000;
