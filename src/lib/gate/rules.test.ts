import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { inspectBytes } from '../mesh/inspect';
import { DEFAULT_GATE_RULES, gateRulesSchema } from './profile';
import { evaluateGate, gatePasses, minEdgeThreshold, severityScore } from './rules';

const report = (name: string) => inspectBytes(new Uint8Array(readFileSync(`fixtures/${name}`)), name);
const ctx = { units: 'mm', targetCellSize: 2 };

describe('gate rules', () => {
	it('clears a closed, outward cube under the default profile', () => {
		const out = evaluateGate(report('cube-closed.stl'), DEFAULT_GATE_RULES, ctx);
		expect(out.every((o) => o.passed)).toBe(true);
		expect(gatePasses(out)).toBe(true);
		expect(severityScore(out)).toBe(0);
	});

	it('holds a cube with a missing face and says where the hole is and what to change', () => {
		const out = evaluateGate(report('cube-one-face-missing.stl'), DEFAULT_GATE_RULES, ctx);
		const closed = out.find((o) => o.rule === 'closed')!;
		expect(closed.passed).toBe(false);
		expect(closed.measured).toBe('1 hole, 4 open edges');
		expect(closed.explanation).toContain('4 mm around');
		expect(closed.location?.points).toHaveLength(1);
		expect(gatePasses(out)).toBe(false);
		expect(severityScore(out)).toBe(10);
	});

	it('reads the shortest-edge limit as a fraction of the cell size or as an absolute length', () => {
		expect(minEdgeThreshold({ ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'fraction-of-cell', value: 0.6 } }, ctx)).toBeCloseTo(1.2, 12);
		expect(minEdgeThreshold({ ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'absolute', value: 0.3 } }, ctx)).toBe(0.3);
		const out = evaluateGate(report('cube-closed.stl'), { ...DEFAULT_GATE_RULES, minEdgeLength: { mode: 'fraction-of-cell', value: 0.6 } }, ctx);
		const rule = out.find((o) => o.rule === 'min-edge-length')!;
		expect(rule.passed).toBe(false);
		expect(rule.limit).toBe('≥ 1.2 mm (0.6 × cell size 2 mm)');
	});

	it('checks the expected genus only when the profile asks for one', () => {
		const r = report('cube-closed.stl');
		expect(evaluateGate(r, DEFAULT_GATE_RULES, ctx).some((o) => o.rule === 'expected-genus')).toBe(false);
		const g1 = evaluateGate(r, { ...DEFAULT_GATE_RULES, expectedGenus: 1 }, ctx).find((o) => o.rule === 'expected-genus')!;
		expect(g1.passed).toBe(false);
		expect(g1.measured).toBe('genus 0');
	});

	it('fills defaults and refuses nonsense in stored profiles', () => {
		expect(gateRulesSchema.parse({})).toEqual(DEFAULT_GATE_RULES);
		expect(() => gateRulesSchema.parse({ maxShells: -1 })).toThrow();
	});
});
