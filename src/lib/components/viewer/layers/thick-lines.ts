/**
 * Thick screen-space line segments drawn as one ordinary triangle mesh (buffers from lineQuads in
 * overlay-draw.ts): width in CSS pixels at any zoom and any pixel ratio, optional dashes in model
 * units, the section plane's clipping. One draw call for any number of segments, no instancing.
 */
import { BufferAttribute, BufferGeometry, Color, DoubleSide, Mesh, ShaderMaterial, Vector2, Vector4, type WebGLRenderer } from 'three';
import { lineQuads } from '../overlay-draw';

const VERTEX = /* glsl */ `
attribute vec3 other;
attribute float side;
attribute float distance;
uniform float linewidth;
uniform vec2 resolution;
varying float vDistance;
#include <common>
#include <clipping_planes_pars_vertex>
void main() {
	vec4 mvPosition = modelViewMatrix * vec4(position, 1.0);
	vec4 clip = projectionMatrix * mvPosition;
	vec4 clipOther = projectionMatrix * modelViewMatrix * vec4(other, 1.0);
	vec2 here = clip.xy / clip.w * resolution;
	vec2 there = clipOther.xy / clipOther.w * resolution;
	vec2 dir = there - here;
	float len = length(dir);
	dir = len > 1e-4 ? dir / len : vec2(1.0, 0.0);
	vec2 across = vec2(-dir.y, dir.x);
	// Half the width across, and half the width back past this end (a square cap).
	vec2 offsetPx = (across * side - dir) * 0.5 * linewidth;
	clip.xy += offsetPx * 2.0 / resolution * clip.w;
	gl_Position = clip;
	vDistance = distance;
	#include <clipping_planes_vertex>
}`;

const FRAGMENT = /* glsl */ `
uniform vec3 color;
uniform float dashSize;
uniform float gapSize;
varying float vDistance;
#include <clipping_planes_pars_fragment>
void main() {
	#include <clipping_planes_fragment>
	if (dashSize > 0.0 && mod(vDistance, dashSize + gapSize) > dashSize) discard;
	gl_FragColor = vec4(color, 1.0);
}`;

const viewport = new Vector4();

/** width in CSS pixels; dash (model units) > 0 draws dashes of that length with gaps of 0.7 of it. */
export function thickLines(segments: Float32Array, colour: string, width: number, dash = 0): Mesh {
	const q = lineQuads(segments);
	const geom = new BufferGeometry();
	geom.setAttribute('position', new BufferAttribute(q.position, 3));
	geom.setAttribute('other', new BufferAttribute(q.other, 3));
	geom.setAttribute('side', new BufferAttribute(q.side, 1));
	geom.setAttribute('distance', new BufferAttribute(q.distance, 1));
	geom.setIndex(new BufferAttribute(q.index, 1));
	const mat = new ShaderMaterial({
		uniforms: {
			color: { value: new Color(colour) },
			linewidth: { value: width },
			resolution: { value: new Vector2(1, 1) },
			dashSize: { value: dash },
			gapSize: { value: dash * 0.7 }
		},
		vertexShader: VERTEX,
		fragmentShader: FRAGMENT,
		side: DoubleSide,
		clipping: true
	});
	const mesh = new Mesh(geom, mat);
	// The viewport in CSS pixels (side-by-side compare halves it): widths stay in screen pixels.
	mesh.onBeforeRender = (renderer: WebGLRenderer) => {
		renderer.getViewport(viewport);
		mat.uniforms.resolution.value.set(viewport.z, viewport.w);
	};
	mesh.raycast = () => {};
	return mesh;
}
