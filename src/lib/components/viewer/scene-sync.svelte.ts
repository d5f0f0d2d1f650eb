/**
 * The effects that keep a viewer's scene in step with its state and props: the mesh worker per
 * source, the report's sample, flow arrow, toggles, colouring, section, pins, the compare revision
 * and the workers measured on demand (deviation, walls and gaps in cells). Call once while a
 * component initialises (the effects live as long as it does).
 */
import { untrack } from 'svelte';
import type { InspectionReport } from '$lib/mesh/report';
import { KIND_ORDER } from './palette';
import type { ViewerScene } from './scene';
import type { ViewerState } from './viewer-state.svelte';

export interface SyncProps {
	src: { url: string; fileName: string };
	report: InspectionReport | null;
	flowDirection: [number, number, number];
	minEdgeLength: number;
	maxFaces: number;
	cellSize: number | null;
	thinCells: number;
	comments: { id: string; point: [number, number, number] }[];
	compare: { url: string; fileName: string; label: string } | null;
}

/** p: the props as getters, so each effect depends only on the props it reads. */
export function syncScene(v: ViewerState, getScene: () => ViewerScene | null, p: SyncProps): void {
	// Main mesh: one worker per source; it ends when the source changes or the viewer goes.
	$effect(() => {
		const s = getScene();
		const url = p.src.url, fileName = p.src.fileName, minEdgeLength = p.minEdgeLength;
		if (!s) return;
		const r = untrack(() => {
			const rep = p.report;
			return rep ? ($state.snapshot(rep) as InspectionReport) : null;
		});
		return v.loadMesh(s, { type: 'load', url, fileName, minEdgeLength, report: r, maxFaces: untrack(() => p.maxFaces) });
	});

	$effect(() => {
		const r = p.report;
		const s = getScene();
		if (r && s) untrack(() => v.applyReportSample(s, r));
	});

	$effect(() => {
		const f = p.flowDirection;
		getScene()?.setFlowDirection([f[0], f[1], f[2]]);
	});
	$effect(() => {
		const s = getScene();
		if (!s) return;
		for (const k of KIND_ORDER) s.setOverlayVisible(k, v.visible[k]);
	});
	$effect(() => {
		if (v.status === 'ready') getScene()?.setWireframe(v.wireframe);
	});
	$effect(() => {
		const s = getScene();
		if (v.status !== 'ready' || !s) return;
		const devOn = p.compare && v.compareMode === 'deviation' && v.deviation;
		s.setColourMode(devOn ? 'deviation' : v.cellColour !== 'off' ? v.cellColour : v.shellColours ? 'shells' : 'plain');
		void v.overlays;
	});
	$effect(() => {
		if (v.status === 'ready') getScene()?.setSection(v.sectionOn, v.sectionAxis, v.sectionT, v.sectionFlip);
	});
	$effect(() => {
		const s = getScene();
		if (v.status !== 'ready' || !s) return;
		s.setPins(p.comments.map((c, i) => ({ id: c.id, point: [c.point[0], c.point[1], c.point[2]], number: i + 1 })));
	});

	// Compare revision: loaded like the main mesh (no overlays needed), then drawn by mode.
	$effect(() => {
		const s = getScene();
		const c = p.compare;
		if (!s || !c || v.status !== 'ready') {
			v.compareStatus = 'idle';
			return;
		}
		return untrack(() => v.loadCompare(s, { type: 'load', url: c.url, fileName: c.fileName, minEdgeLength: 0, report: null, maxFaces: p.maxFaces }));
	});
	$effect(() => {
		if (v.compareStatus === 'ready') getScene()?.setCompareMode(v.compareMode);
	});

	// Walls and gaps in cells: measured once per mesh, in a worker, when first asked for.
	$effect(() => {
		const s = getScene();
		const cellSize = p.cellSize, thinCells = p.thinCells;
		if (!s || v.status !== 'ready' || v.cellColour === 'off' || !cellSize || untrack(() => v.cellFieldStatus) !== 'idle') return;
		return untrack(() => v.measureCellField(s, cellSize, 2 * thinCells));
	});

	// Deviation: computed once per compare pair, in a worker, when first asked for.
	$effect(() => {
		const s = getScene();
		if (!s || v.compareStatus !== 'ready' || v.compareMode !== 'deviation' || untrack(() => v.deviation)) return;
		return untrack(() => v.measureDeviation(s));
	});
}
