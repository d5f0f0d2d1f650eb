/**
 * The defect overlays and the highlight of a selected finding, drawn from buffers the parse worker
 * finished (overlay-draw.ts): one geometry per kind and style, never one object per item. Lines
 * are plain triangle meshes (thick-lines.ts), markers point sprites with a solid and a ghosted pass.
 * Level of detail: at rest every drawn segment (an even sample of THICK_SEGMENT_CAP thick, the rest
 * as 1-pixel lines); while the camera moves an even sample of MOVING_SEGMENT_CAP segments and
 * MOVING_MARKER_CAP markers per kind (one pass, without the ghost behind the surface; a sampled line
 * overlay's midpoint markers wait for rest, its moving lines show where the items are). Marker textures are this layer's own, freed with it.
 */
import {
	BufferAttribute,
	BufferGeometry,
	CanvasTexture,
	Color,
	DoubleSide,
	Group,
	LineBasicMaterial,
	LineSegments,
	Points,
	PointsMaterial,
	ShaderMaterial,
	type Material,
	type Mesh,
	type Object3D,
	type Texture
} from 'three';
import type { MeshOverlays } from '$lib/mesh/overlays';
import type { OverlayDraw } from '../overlay-draw';
import { BACKGROUND_COLOUR, drawMarker, KIND_ORDER, KIND_STYLE, type MarkerShape, type OverlayKind } from '../palette';
import type { MeshLayer } from './mesh-layer';
import { thickLines } from './thick-lines';

/** What to emphasise: a point with a radius to frame, optional segments and faces. */
export interface Focus {
	center: [number, number, number];
	radius: number;
	segments?: Float32Array;
	faces?: Uint32Array;
}

const PATTERN_VERTEX = /* glsl */ `
#include <common>
#include <clipping_planes_pars_vertex>
void main() {
	#include <begin_vertex>
	#include <project_vertex>
	#include <clipping_planes_vertex>
}`;
// Screen-space patterns so they keep their size at any zoom: 0 checker, 1 diagonal hatch, 2 flat tint.
const PATTERN_FRAGMENT = /* glsl */ `
uniform vec3 color;
uniform float opacity;
uniform int pattern;
uniform float cell;
#include <clipping_planes_pars_fragment>
void main() {
	#include <clipping_planes_fragment>
	float a = opacity;
	if (pattern == 0) {
		vec2 c = floor(gl_FragCoord.xy / cell);
		a = mod(c.x + c.y, 2.0) < 1.0 ? opacity : opacity * 0.25;
	} else if (pattern == 1) {
		a = mod(gl_FragCoord.x + gl_FragCoord.y, cell) < cell * 0.45 ? opacity : 0.0;
		if (a == 0.0) discard;
	}
	gl_FragColor = vec4(color, a);
}`;

function patternMaterial(colour: string, pattern: 0 | 1 | 2, opacity: number, cell: number): ShaderMaterial {
	return new ShaderMaterial({
		uniforms: { color: { value: new Color(colour) }, opacity: { value: opacity }, pattern: { value: pattern }, cell: { value: cell } },
		vertexShader: PATTERN_VERTEX,
		fragmentShader: PATTERN_FRAGMENT,
		transparent: true,
		depthWrite: false,
		side: DoubleSide,
		clipping: true,
		polygonOffset: true,
		polygonOffsetFactor: -2,
		polygonOffsetUnits: -4
	});
}

/** Marker textures, one set per viewer: disposing one viewer never takes another's textures. */
class MarkerTextures {
	private cache = new Map<MarkerShape, Texture>();
	get(shape: MarkerShape): Texture {
		let tex = this.cache.get(shape);
		if (tex) return tex;
		const canvas = document.createElement('canvas');
		canvas.width = canvas.height = 64;
		drawMarker(canvas.getContext('2d')!, shape, 64);
		tex = new CanvasTexture(canvas);
		this.cache.set(shape, tex);
		return tex;
	}
	dispose(): void {
		for (const t of this.cache.values()) t.dispose();
		this.cache.clear();
	}
}

/** 1-pixel GL lines: two vertices a segment and the simplest shader, for segments past the thick-line cap. */
function thinLines(segments: Float32Array, colour: string): LineSegments {
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(segments, 3));
	const line = new LineSegments(geom, new LineBasicMaterial({ color: new Color(colour) }));
	line.raycast = () => {};
	return line;
}

/**
 * Markers drawn twice from one geometry: solid where in front of the surface, ghosted (a quarter
 * opacity) where hidden behind it, so items on the far side stay findable without looking near.
 */
function markerPoints(textures: MarkerTextures, points: Float32Array, shape: MarkerShape, colour: string, size: number): Group {
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(points, 3));
	const front = new Points(geom, new PointsMaterial({ map: textures.get(shape), color: new Color(colour), size, sizeAttenuation: false, transparent: true, alphaTest: 0.2, depthTest: true, depthWrite: false }));
	const ghost = new Points(geom, new PointsMaterial({ map: textures.get(shape), color: new Color(colour), size, sizeAttenuation: false, transparent: true, opacity: 0.22, depthTest: false, depthWrite: false }));
	ghost.renderOrder = 9;
	front.renderOrder = 10;
	const g = new Group();
	g.add(ghost, front);
	return g;
}

/** One pass of markers (no ghost behind the surface), for moving frames. */
function markerPointsLight(textures: MarkerTextures, points: Float32Array, shape: MarkerShape, colour: string, size: number): Points {
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(points, 3));
	const p = new Points(geom, new PointsMaterial({ map: textures.get(shape), color: new Color(colour), size, sizeAttenuation: false, transparent: true, alphaTest: 0.2, depthTest: true, depthWrite: false }));
	p.renderOrder = 10;
	return p;
}

/** Frees a group's geometries and materials (not the mesh's shared position buffer, not the cached textures). */
function disposeGroup(g: Group): void {
	g.traverse((o) => {
		const m = o as Mesh;
		if (m.geometry) {
			// Face subsets share the mesh's position attribute: detach it first so disposing the
			// subset frees only its index, not the mesh's GPU buffer.
			if (m.geometry.userData.sharesPosition) m.geometry.deleteAttribute('position');
			m.geometry.dispose();
		}
		if (m.material) (m.material as Material).dispose();
	});
	g.clear();
}

export class OverlayLayer {
	readonly group = new Group();
	/** Overlays drawn as a sample: items drawn and items in the finding. */
	sampled: Partial<Record<OverlayKind, { drawn: number; total: number }>> = {};
	private kinds = new Map<OverlayKind, Group>();
	/** Objects with a light stand-in: the stand-in is drawn while the camera moves. */
	private lod: { fine: Object3D; coarse: Object3D }[] = [];
	private highlightGroup = new Group();
	private textures = new MarkerTextures();
	private visible: Record<OverlayKind, boolean> = Object.fromEntries(KIND_ORDER.map((k) => [k, true])) as Record<OverlayKind, boolean>;

	constructor(private mesh: MeshLayer) {
		this.group.add(this.highlightGroup);
	}

	/** diag: the part's bounding-box diagonal (dash lengths follow it). */
	setOverlays(o: MeshOverlays, d: OverlayDraw, diag: number): void {
		this.clearKinds();
		this.sampled = { ...d.sampled };
		const dash = (diag || 1) / 120;
		const add = (kind: OverlayKind, ...objs: (Object3D | null)[]) => {
			const g = new Group();
			for (const x of objs) if (x) g.add(x);
			g.visible = this.visible[kind];
			this.kinds.set(kind, g);
			this.group.add(g);
		};
		const st = KIND_STYLE;
		const tex = this.textures;
		const lod = (fine: Object3D, moving: Object3D | null): Object3D[] => {
			if (!moving) return [fine];
			moving.visible = false;
			this.lod.push({ fine, coarse: moving });
			return [fine, moving];
		};
		const lines = (full: Float32Array, thick: Float32Array, moving: Float32Array, colour: string, make: (segments: Float32Array) => Object3D): Object3D[] => {
			let fine: Object3D;
			if (thick.length) {
				fine = new Group();
				fine.add(thinLines(full, colour), make(thick));
			} else fine = make(full);
			return lod(fine, moving.length ? make(moving) : null);
		};
		const markers = (all: Float32Array, moving: Float32Array, shape: MarkerShape, colour: string, size: number): Object3D[] =>
			lod(markerPoints(tex, all, shape, colour, size), moving.length ? markerPointsLight(tex, moving, shape, colour, size) : null);
		// Markers at the midpoints of a line overlay's segments: while moving, when the overlay is
		// sampled, its moving lines already show where the items are, so the markers wait for rest.
		const lineMarkers = (all: Float32Array, moving: Float32Array, shape: MarkerShape, colour: string, size: number): Object3D[] =>
			lod(markerPoints(tex, all, shape, colour, size), moving.length ? new Group() : null);
		const none = new Float32Array(0);
		if (o.holeSegments.length) add('holes', ...lines(o.holeSegments, none, d.holeSegmentsMoving, st.holes.colour, (seg) => thickLines(seg, st.holes.colour, 4.5, dash)), markerPoints(tex, d.holeCentres, st.holes.marker, st.holes.colour, 26));
		if (o.nonManifoldEdgeSegments.length) {
			const cased = (seg: Float32Array) => {
				const g = new Group();
				const inner = thickLines(seg, BACKGROUND_COLOUR, 2.2);
				inner.renderOrder = 1;
				g.add(thickLines(seg, st.nonManifoldEdges.colour, 7), inner);
				return g;
			};
			add(
				'nonManifoldEdges',
				...lines(o.nonManifoldEdgeSegments, d.nonManifoldEdgeSegmentsThick, d.nonManifoldEdgeSegmentsMoving, st.nonManifoldEdges.colour, cased),
				...lineMarkers(d.nonManifoldEdgeMidpoints, d.nonManifoldEdgeMidpointsMoving, st.nonManifoldEdges.marker, st.nonManifoldEdges.colour, 20)
			);
		}
		if (o.nonManifoldVertexPoints.length) add('nonManifoldVertices', markerPoints(tex, o.nonManifoldVertexPoints, st.nonManifoldVertices.marker, st.nonManifoldVertices.colour, 24));
		if (o.selfIntersectionPoints.length) {
			add(
				'selfIntersections',
				this.mesh.faceSubset(d.selfIntersectionIndex, patternMaterial(st.selfIntersections.colour, 1, 0.9, 7)),
				markerPoints(tex, o.selfIntersectionPoints, st.selfIntersections.marker, st.selfIntersections.colour, 22)
			);
		}
		if (o.shortEdgeSegments.length) {
			add(
				'shortEdges',
				...lines(o.shortEdgeSegments, d.shortEdgeSegmentsThick, d.shortEdgeSegmentsMoving, st.shortEdges.colour, (seg) => thickLines(seg, st.shortEdges.colour, 5)),
				...lineMarkers(d.shortEdgeMidpoints, d.shortEdgeMidpointsMoving, st.shortEdges.marker, st.shortEdges.colour, 12)
			);
		}
		if (o.degenerateFaces.length) add('degenerateFaces', ...markers(d.degenerateCentres, d.degenerateCentresMoving, st.degenerateFaces.marker, st.degenerateFaces.colour, 20));
		if (o.flippedFaces.length) add('flippedFaces', this.mesh.faceSubset(d.flippedIndex, patternMaterial(st.flippedFaces.colour, 0, 0.85, 6)));
		if (o.floatingShells.length) {
			add(
				'floatingShells',
				this.mesh.faceSubset(d.floatingIndex, patternMaterial(st.floatingShells.colour, 2, 0.35, 1)),
				thickLines(d.floatingBoxSegments, st.floatingShells.colour, 2.5, dash * 0.25),
				markerPoints(tex, d.floatingCentres, st.floatingShells.marker, st.floatingShells.colour, 26)
			);
		}
	}

	setVisible(kind: OverlayKind, on: boolean): void {
		this.visible[kind] = on;
		const g = this.kinds.get(kind);
		if (g) g.visible = on;
	}

	/** The light versions while the camera moves, the full ones at rest. */
	setMoving(moving: boolean): void {
		for (const l of this.lod) {
			l.fine.visible = !moving;
			l.coarse.visible = moving;
		}
	}

	/** Emphasises one finding (segments in white, faces tinted, a reticle at its centre); null clears. */
	highlight(focus: Focus | null): void {
		disposeGroup(this.highlightGroup);
		if (!focus) return;
		if (focus.segments && focus.segments.length) this.highlightGroup.add(thickLines(focus.segments, '#ffffff', 3));
		if (focus.faces && focus.faces.length) {
			const sub = this.mesh.faceSubset(this.mesh.faceIndexOf(focus.faces), patternMaterial('#ffffff', 2, 0.55, 1));
			if (sub) this.highlightGroup.add(sub);
		}
		const pt = markerPoints(this.textures, Float32Array.from(focus.center), 'reticle', '#ffffff', 44);
		pt.children.forEach((c) => (c.renderOrder += 6));
		this.highlightGroup.add(pt);
	}

	/** The drawable objects of each shown kind as they are drawn now (for the bench's per-object figures). */
	drawnObjects(): { kind: OverlayKind; object: Object3D }[] {
		const out: { kind: OverlayKind; object: Object3D }[] = [];
		for (const [kind, g] of this.kinds) {
			if (!g.visible) continue;
			g.traverseVisible((o) => {
				if ((o as Mesh).isMesh || (o as Points).isPoints || (o as LineSegments).isLineSegments) out.push({ kind, object: o });
			});
		}
		return out;
	}

	private clearKinds(): void {
		for (const g of this.kinds.values()) {
			disposeGroup(g);
			g.removeFromParent();
		}
		this.kinds.clear();
		this.lod = [];
	}

	dispose(): void {
		this.clearKinds();
		disposeGroup(this.highlightGroup);
		this.textures.dispose();
		this.group.removeFromParent();
	}
}
