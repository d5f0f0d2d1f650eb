import { describe, expect, it } from 'vitest';
import { distribution, inBar, topologyTimeline } from './run-charts';
import { parseFileMeta, partSlugFromName, parseRunKind, slugFromName } from './run-meta';

describe('run figures', () => {
	it('draws one bar per value for a whole-number measure and bins a continuous one so every value lands in exactly one bar', () => {
		const g = distribution('genus', [0, 0, 1, 3, null], { discrete: true });
		expect(g.bars.map((b) => [b.lo, b.count])).toEqual([[0, 2], [1, 1], [2, 0], [3, 1]]);
		expect(g.missing).toBe(1);
		const xs = [0.1, 0.5, 0.5, 0.9, 1.7, 2.0];
		const d = distribution('volume', xs, { bins: 4 });
		expect(d.bars.reduce((s, b) => s + b.count, 0)).toBe(xs.length);
		for (const x of xs) expect(d.bars.filter((b, i) => inBar(x, b.lo, b.hi, i === d.bars.length - 1))).toHaveLength(1);
		expect(distribution('volume', [2, 2]).bars).toEqual([{ lo: 2, hi: 2, count: 2 }]);
	});

	it('marks the iterations where genus or shell count changed, in iteration order, skipping unchecked ones', () => {
		const t = topologyTimeline([
			{ iteration: 2, revisionId: 12, genus: 1, shells: 1 },
			{ iteration: 0, revisionId: 10, genus: 0, shells: 1 },
			{ iteration: 1, revisionId: 11, genus: null, shells: null },
			{ iteration: 3, revisionId: 13, genus: 1, shells: 2 },
			{ iteration: null, revisionId: 14, genus: 5, shells: 5 }
		]);
		expect(t.map((p) => p.iteration)).toEqual([0, 1, 2, 3]);
		expect(t.filter((p) => p.changed).map((p) => [p.iteration, p.change])).toEqual([[2, 'genus 0 → 1'], [3, 'shells 1 → 2']]);
	});
});

describe('run names and metadata', () => {
	it('names a part from a file name', () => {
		expect(partSlugFromName('Pod_07 (v2).STL')).toBe('pod-07-v2');
		expect(partSlugFromName('runs/Kiel-Bülb.obj')).toBe('kiel-bulb');
		expect(partSlugFromName('___.stl')).toBeNull();
		expect(partSlugFromName('x'.repeat(80) + '.ply')).toHaveLength(64);
	});

	it('makes a part address from a name a person typed (the upload page), keeping a dotted word', () => {
		expect(slugFromName('Pod with fins')).toBe('pod-with-fins');
		expect(slugFromName('Kiel-Bülb v2.stl')).toBe('kiel-bulb-v2-stl');
		expect(slugFromName('!!!')).toBeNull();
	});
	it('reads metadata and kinds, refusing what it cannot use', () => {
		expect(parseFileMeta('{"iteration": 3, "seed": 9}')).toEqual({ iteration: 3, seed: 9 });
		expect(parseFileMeta('  ')).toBeNull();
		expect(() => parseFileMeta('{"iteration": "3"}')).toThrow(/iteration/);
		expect(() => parseFileMeta('null')).toThrow(/JSON object/);
		expect(parseRunKind(' Iterations ')).toBe('iterations');
		expect(parseRunKind('')).toBeNull();
		expect(() => parseRunKind('batch')).toThrow(/samples/);
	});
});

describe("a part's history with iterations of a run", () => {
	it('puts the run revisions in iteration order in the places they hold, leaving the others where they are', async () => {
		const { inIterationOrder } = await import('./server/revision-detail');
		const revs = [
			{ number: 1, runId: null, iteration: null },
			{ number: 2, runId: 7, iteration: 2 },
			{ number: 3, runId: 7, iteration: 0 },
			{ number: 4, runId: null, iteration: null },
			{ number: 5, runId: 7, iteration: 1 }
		];
		expect(inIterationOrder(revs).map((r) => r.number)).toEqual([1, 3, 5, 4, 2]);
	});
});
