/**
 * Every threshold the inspection uses, in one place. Topology is exact (integer indices, exact
 * predicates); these only steer hints, histograms and the projected-area raster.
 */
import type { Tolerances } from './report-types';

export const DEFAULT_TOLERANCES: Tolerances = {
	// 1e-9 of the bbox diagonal: far above float64 rounding of coordinates a generator clipped to a
	// plane, far below any real feature. Common practice, not from a source.
	planeRel: 1e-9,
	// Normalised radius ratio 2r/R below 0.05 ≈ an aspect ratio above ~20:1. Common practice.
	sliverQuality: 0.05,
	// A piece below 1 % of the area and 1 % of the faces, with all such pieces together below 1 % of
	// the area, is a speck; anything larger is a body of its own. Common practice.
	smallShellAreaShare: 0.01,
	smallShellFaceShare: 0.01,
	sliverClusterMin: 8,
	minEdgeLength: 0,
	rasterCells: 128,
	maxHolesListed: 200
};

/** Sample cap for self-intersecting pairs listed in the report. */
export const DEFAULT_SAMPLE_LIMIT = 100;
/** Bins of the edge-length (log-spaced) and face-quality (linear on [0, 1]) histograms. */
export const EDGE_LENGTH_BINS = 24;
export const FACE_QUALITY_BINS = 20;
