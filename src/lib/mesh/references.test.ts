/** The analysis checked against sources outside this project; each check names its source. */
import { beforeAll, describe, expect, it } from 'vitest';
import Module from 'manifold-3d';
import bunny from 'bunny';
import { buildReport } from './report';
import { marchingCubes, gridFor } from './testing/marching-cubes';
import { genusRings, sphere } from './testing/implicit-shapes';
import { asParsed, icosphere, plateWithHoles, torus, unitCube } from './testing/test-meshes';
import type { MeshBuffers } from './types';
import { expectClose } from './testing/test-close';

const report = (m: MeshBuffers) => buildReport(asParsed(m), { rasterCells: 256 });

/** Same triangles, rounded to float32 as manifold-3d stores them, so both sides see one mesh. */
function toFloat32(m: MeshBuffers): MeshBuffers {
	return { positions: Float64Array.from(Float32Array.from(m.positions)), indices: m.indices };
}

function implicitMesh(shape: ReturnType<typeof sphere>, cell: number): MeshBuffers {
	return marchingCubes(shape.field, gridFor(shape.min, shape.max, cell));
}

// The bunny package ships { positions: [x, y, z][], cells: [a, b, c][] }.
const bunnyData = bunny;
const bunnyMesh: MeshBuffers = {
	positions: Float64Array.from(bunnyData.positions.flat()),
	indices: Uint32Array.from(bunnyData.cells.flat())
};

describe('Euler–Poincaré: closed orientable surfaces have χ = V − E + F = 2 − 2g', () => {
	const cases: [string, number, () => MeshBuffers][] = [
		['icosphere, 3 refinements', 0, () => icosphere(3)],
		['parametric torus 48 × 24', 1, () => torus(48, 24)],
		...[0, 1, 2, 3].map((g): [string, number, () => MeshBuffers] => [`voxel plate with ${g} holes`, g, () => plateWithHoles(g)]),
		['marching-cubes sphere', 0, () => implicitMesh(sphere(1), 0.1)],
		...[1, 2, 3].map((g): [string, number, () => MeshBuffers] => [`marching-cubes ring chain`, g, () => implicitMesh(genusRings(g), 0.08)])
	];
	it.each(cases)('%s has genus %i', (_name, g, make) => {
		const r = report(make());
		expect(r.watertight).toBe(true);
		expect(r.components).toBe(1);
		expect(r.eulerCharacteristic).toBe(2 - 2 * g);
		expect(r.genus).toBe(g);
		expect(r.shells[0].genus).toBe(g);
		expect(r.consistentlyOriented).toBe(true);
		expect(r.volume).toBeGreaterThan(0);
	});
});

describe('manifold-3d 3.5 as a reference for genus, volume and surface area of closed meshes', () => {
	let wasm: Awaited<ReturnType<typeof Module>>;
	beforeAll(async () => {
		wasm = await Module();
		wasm.setup();
	});
	const cases: [string, () => MeshBuffers][] = [
		['icosphere, 4 refinements', () => icosphere(4, 2.5)],
		['parametric torus 64 × 32', () => torus(64, 32, 3, 1)],
		['voxel plate with 3 holes', () => plateWithHoles(3)],
		['marching-cubes ring chain of genus 2', () => implicitMesh(genusRings(2), 0.08)],
		['Stanford bunny (bunny package)', () => bunnyMesh]
	];
	it.each(cases)('%s: same genus, volume and area', (_name, make) => {
		const m = toFloat32(make());
		const mesh = new wasm.Mesh({ numProp: 3, vertProperties: Float32Array.from(m.positions), triVerts: Uint32Array.from(m.indices) });
		const solid = new wasm.Manifold(mesh);
		try {
			expect(solid.status()).toBe('NoError');
			const r = report(m);
			expect(r.genus).toBe(solid.genus());
			expectClose(r.volume!, solid.volume(), 1e-9, 'volume');
			expectClose(r.area, solid.surfaceArea(), 1e-9, 'area');
		} finally {
			solid.delete(); // Mesh is a plain JS object in manifold-3d 3.x; only the Manifold holds WASM memory
		}
	});
});

describe('analytic areas and volumes', () => {
	it('gives the unit cube area 6 and volume 1 (exact in float64)', () => {
		const r = report(unitCube());
		expect(r.area).toBe(6);
		expect(r.volume).toBe(1);
		expect(r.projectedArea.x).toBe(1);
		expect(r.bbox).toEqual({ min: [0, 0, 0], max: [1, 1, 1] });
	});

	it('gives a negative volume when every face of the cube is flipped', () => {
		const c = unitCube();
		const flipped = { positions: c.positions, indices: c.indices.slice() };
		for (let t = 0; t < 12; t++) [flipped.indices[3 * t + 1], flipped.indices[3 * t + 2]] = [c.indices[3 * t + 2], c.indices[3 * t + 1]];
		const r = report(flipped);
		expect(r.volume).toBe(-1);
		expect(r.consistentlyOriented).toBe(true);
		expect(r.hints.map((h) => h.kind)).toContain('inside-out');
	});

	// Interpolating a smooth surface by triangles of size h gives area and volume errors of O(h²)
	// (Hildebrandt, Polthier & Wardetzky 2006, "On the convergence of metric and geometric
	// properties of polyhedral surfaces", from memory). Each refinement halves h: error ratio → 4.
	it('converges icosphere area and volume to 4πr² and 4/3πr³ at the O(h²) rate, k = 1..5', () => {
		const r0 = 1.5;
		const errs = [1, 2, 3, 4, 5].map((k) => {
			const r = report(icosphere(k, r0));
			return [4 * Math.PI * r0 * r0 - r.area, (4 / 3) * Math.PI * r0 ** 3 - r.volume!];
		});
		for (const [ea, ev] of errs) {
			expect(ea).toBeGreaterThan(0); // inscribed: always below the sphere
			expect(ev).toBeGreaterThan(0);
		}
		for (let i = 0; i + 1 < errs.length; i++) {
			for (const j of [0, 1]) {
				const ratio = errs[i][j] / errs[i + 1][j];
				expect(ratio).toBeGreaterThan(3.6);
				expect(ratio).toBeLessThan(4.2);
			}
		}
		expect(errs[4][0] / (4 * Math.PI * r0 * r0)).toBeLessThan(1e-3);
	});

	it('measures the silhouette of a torus seen along its axis within the stated bound', () => {
		// Seen along z, a ring torus (R, r) shadows the annulus π((R + r)² − (R − r)²) = 4πRr;
		// the polygonal torus is inscribed, so compare with the polygon annulus of n sides.
		const n = 256, R = 2, r = 0.5;
		const polygonArea = (rad: number) => 0.5 * n * rad * rad * Math.sin((2 * Math.PI) / n);
		const expected = polygonArea(R + r) - polygonArea(R - r);
		const rep = buildReport(asParsed(torus(n, 64, R, r)), { rasterCells: 1024, flowDirection: [0, 0, 1] });
		expect(Math.abs(rep.projectedArea.z - expected)).toBeLessThanOrEqual(rep.projectedArea.flow.errorBound);
		expect(rep.projectedArea.flow.area).toBe(rep.projectedArea.z);
		expect(rep.projectedArea.flow.errorBound / expected).toBeLessThan(0.02);
	});

	it('gives the side silhouette of a torus, not half of Σ|n·d|·A, because the torus is not convex', () => {
		// Seen along x, a ring torus around z (R = 2, r = 0.5) shadows a stadium: the band
		// |y| ≤ R, |z| ≤ r plus two half-discs of radius r, area 4Rr + πr² (elementary geometry).
		const R = 2, r = 0.5;
		const m = torus(256, 96, R, r);
		const rep = buildReport(asParsed(m), { rasterCells: 1024 });
		const stadium = 4 * R * r + Math.PI * r * r;
		// The 256 × 96 polygon torus is inscribed: its shadow lies within 0.5 % below the smooth one.
		expect(rep.projectedArea.x).toBeLessThanOrEqual(stadium + rep.projectedArea.errorBounds[0]);
		expect(rep.projectedArea.x).toBeGreaterThan(stadium * 0.995 - rep.projectedArea.errorBounds[0]);
		// Half of Σ|n·x|·A counts the inner half of the ring twice where it is hidden behind the outer.
		let halfAbsFlux = 0;
		const p = m.positions;
		for (let t = 0; t < m.indices.length; t += 3) {
			const a = 3 * m.indices[t], b = 3 * m.indices[t + 1], c = 3 * m.indices[t + 2];
			const uy = p[b + 1] - p[a + 1], uz = p[b + 2] - p[a + 2], vy = p[c + 1] - p[a + 1], vz = p[c + 2] - p[a + 2];
			halfAbsFlux += Math.abs(uy * vz - uz * vy) / 4; // |n_x|·A = |(u × v)_x| / 2, halved
		}
		expect(halfAbsFlux).toBeGreaterThan(1.2 * rep.projectedArea.x);
	});
});

describe('Stanford bunny as shipped in the bunny npm package (1.0.1)', () => {
	// Counts from the package data itself (positions.length, cells.length), not from this engine.
	it('has the vertex and face counts the package ships', () => {
		const r = report(bunnyMesh);
		expect(r.vertices).toBe(bunnyData.positions.length);
		expect(r.faces).toBe(bunnyData.cells.length);
		expect([r.vertices, r.faces]).toEqual([1839, 3674]);
	});

	// The original Stanford scan has open holes in its base; this package's low-poly version is
	// closed — manifold-3d accepts it as a manifold (status NoError above), which it would refuse
	// with any boundary edge. So the facts that hold are: no boundary loops, one shell, genus 0.
	it('is closed with no boundary loops, one shell and genus 0 (cross-checked by manifold-3d)', () => {
		const r = report(bunnyMesh);
		expect(r.boundaryLoops).toBe(0);
		expect(r.boundaryEdges).toBe(0);
		expect(r.components).toBe(1);
		expect(r.genus).toBe(0);
		// Euler–Poincaré: every edge in two faces → E = 3F/2, and V − E + F = 2.
		expect(r.edges).toBe((3 * r.faces) / 2);
		expect(r.eulerCharacteristic).toBe(2);
		expect(r.volume).toBeGreaterThan(0);
	});
});
