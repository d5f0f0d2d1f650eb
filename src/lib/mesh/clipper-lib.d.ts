// Types for the part of `clipper-lib` (integer polygon clipping) that projection-union.ts uses.
declare module 'clipper-lib' {
	interface IntPoint {
		X: number;
		Y: number;
	}
	type Path = IntPoint[];
	class Clipper {
		AddPaths(paths: Path[], polyType: number, closed: boolean): boolean;
		Execute(clipType: number, solution: Path[], subjFillType: number, clipFillType: number): boolean;
	}
	const ClipperLib: {
		Clipper: typeof Clipper;
		PolyType: { ptSubject: number; ptClip: number };
		ClipType: { ctIntersection: number; ctUnion: number; ctDifference: number; ctXor: number };
		PolyFillType: { pftEvenOdd: number; pftNonZero: number; pftPositive: number; pftNegative: number };
		ClipperBase: { loRange: number; hiRange: number };
	};
	export default ClipperLib;
}
