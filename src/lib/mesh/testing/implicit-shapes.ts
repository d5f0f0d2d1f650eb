/**
 * Seeded implicit fields (negative inside, positive outside) for marching-cubes test and bench
 * meshes: sphere, torus, genus-g rings, and marine shapes (tow body, keel bulb, sensor pod) with
 * seeded bumps. Units are arbitrary model units; each shape states the box it fits in.
 */

import { mulberry32 } from '../random';

export { mulberry32 };

export interface ImplicitShape {
	name: string;
	/** Negative inside, positive outside; roughly a distance near the surface. */
	field: (x: number, y: number, z: number) => number;
	/** Box that holds the surface. */
	min: [number, number, number];
	max: [number, number, number];
	/** Genus of the closed surface (every shape here is one connected piece). */
	genus: number;
}

export function sphere(r = 1): ImplicitShape {
	return { name: 'sphere', field: (x, y, z) => Math.sqrt(x * x + y * y + z * z) - r, min: [-r, -r, -r], max: [r, r, r], genus: 0 };
}

/** Ring torus around the z axis: centre-line radius R, tube radius r < R. */
export function torus(R = 1, r = 0.35): ImplicitShape {
	return {
		name: 'torus',
		field: (x, y, z) => {
			const q = Math.sqrt(x * x + y * y) - R;
			return Math.sqrt(q * q + z * z) - r;
		},
		min: [-R - r, -R - r, -r],
		max: [R + r, R + r, r],
		genus: 1
	};
}

/** Polynomial smooth minimum (common practice in implicit modelling); k is the blend width. */
function smin(a: number, b: number, k: number): number {
	const h = Math.max(k - Math.abs(a - b), 0) / k;
	return Math.min(a, b) - (h * h * k) / 4;
}

/** g ring tori in a row along x, each overlapping the next and blended: a closed surface of genus g. */
export function genusRings(g: number, R = 1, r = 0.35): ImplicitShape {
	if (!Number.isInteger(g) || g < 1 || g > 16) throw new Error(`genusRings needs a genus from 1 to 16, got ${g}.`);
	const step = 2 * R; // neighbouring centre lines touch, tubes overlap by 2r
	const x0 = (-(g - 1) * step) / 2;
	return {
		name: `genus-${g}`,
		field: (x, y, z) => {
			let d = Infinity;
			for (let k = 0; k < g; k++) {
				const px = x - (x0 + k * step);
				const q = Math.sqrt(px * px + y * y) - R;
				const dk = Math.sqrt(q * q + z * z) - r;
				d = k === 0 ? dk : smin(d, dk, 0.2 * r);
			}
			return d;
		},
		min: [x0 - R - r, -R - r, -r],
		max: [-x0 + R + r, R + r, r],
		genus: g
	};
}

interface Bump {
	x: number;
	y: number;
	z: number;
	/** Height (positive pushes the surface out) and width. */
	a: number;
	s: number;
}

function seededBumps(seed: number, count: number, rx: number, ry: number, rz: number, height: number, taper: number): Bump[] {
	const rnd = mulberry32(seed);
	const bumps: Bump[] = [];
	for (let k = 0; k < count; k++) {
		// A point on the ellipsoid surface, direction uniform on the sphere.
		const u = 2 * rnd() - 1, phi = 2 * Math.PI * rnd();
		const w = Math.sqrt(1 - u * u);
		const x = rx * w * Math.cos(phi);
		const t = 1 - taper * Math.max(0, x / rx);
		bumps.push({ x, y: ry * t * w * Math.sin(phi), z: rz * t * u, a: height * (0.4 + 0.6 * rnd()) * (rnd() < 0.7 ? 1 : -1), s: 0.15 + 0.2 * rnd() });
	}
	return bumps;
}

/** Ellipsoid-like body with semi-axes rx, ry, rz and smooth seeded bumps (genus 0 for small bumps). */
function bumpyBody(name: string, seed: number, rx: number, ry: number, rz: number, bumpCount: number, height: number, taper: number): ImplicitShape {
	const bumps = seededBumps(seed, bumpCount, rx, ry, rz, height, taper);
	const rmin = Math.min(rx, ry, rz);
	// The field's slope is as low as rmin / rmax along the long axis, so a bump of field height h can
	// move the surface out by h · rmax / rmin there.
	const margin = (height * 1.2 * Math.max(rx, ry, rz)) / rmin;
	return {
		name,
		field: (x, y, z) => {
			// Taper: the section shrinks towards +x, as on a tow body's tail.
			const t = 1 - taper * Math.max(0, x / rx);
			const ex = x / rx, ey = y / (ry * t), ez = z / (rz * t);
			let d = (Math.sqrt(ex * ex + ey * ey + ez * ez) - 1) * rmin;
			// Bumps change the field by at most `height`: farther out the sign cannot change, and
			// marching cubes only interpolates near sign changes.
			if (d > 1.1 * height || d < -1.1 * height) return d;
			for (let k = 0; k < bumps.length; k++) {
				const b = bumps[k];
				const dx = x - b.x, dy = y - b.y, dz = z - b.z;
				const q = (dx * dx + dy * dy + dz * dz) / (b.s * b.s);
				if (q < 9) d -= b.a * Math.exp(-q);
			}
			return d;
		},
		min: [-rx - margin, -ry - margin, -rz - margin],
		max: [rx + margin, ry + margin, rz + margin],
		genus: 0
	};
}

/** Elongated tow body (along x) with a tapered tail and seeded surface bumps. */
export function towBody(seed = 1): ImplicitShape {
	return bumpyBody('tow-body', seed, 2.4, 0.6, 0.6, 24, 0.06, 0.45);
}

/** Teardrop keel bulb with seeded bumps. */
export function keelBulb(seed = 2): ImplicitShape {
	return bumpyBody('keel-bulb', seed, 1.6, 0.5, 0.7, 16, 0.05, 0.6);
}

/** Near-spherical sensor pod with seeded bumps. */
export function sensorPod(seed = 3): ImplicitShape {
	return bumpyBody('sensor-pod', seed, 0.8, 0.8, 0.7, 12, 0.05, 0.1);
}
