// The mesh viewer on its dev harness (enabled in npm test through SHELLGATE_DEV_MAILBOX=1): a tow
// body with one of each defect, its report computed here in Node by the engine from the same bytes.
import { expect, test, type Page } from '@playwright/test';
import { defectSampler, SAMPLER_MIN_EDGE } from '../src/lib/components/viewer/sample-defects';
import { writeBinaryStl } from '../src/lib/mesh/write';
import { inspectBytes } from '../src/lib/mesh/inspect';
import { shot } from './helpers';

type Hook = {
	status: string;
	triangles: number;
	overlaysReady: boolean;
	camera: { position: [number, number, number]; target: [number, number, number]; animating: boolean };
	render: () => number;
	gpuMemory: () => { geometries: number; textures: number };
	setFlowDirection: (f: [number, number, number]) => void;
};
// Software WebGL on a busy machine: loading and the first frames take seconds.
test.describe.configure({ timeout: 120_000 });

let cached: ReturnType<typeof inspectBytes> | null = null;
function sampleReport() {
	cached ??= inspectBytes(writeBinaryStl(defectSampler()), 'tow-body-defects.stl', { minEdgeLength: SAMPLER_MIN_EDGE });
	return cached;
}

const hook = (page: Page) => page.evaluate(() => (window as unknown as { __shellgateViewer: Hook }).__shellgateViewer);

/**
 * Waits until viewer i has drawn its overlays or given up on them, then requires the former: a
 * failure shows at once with its message instead of as a time-out.
 */
async function overlaysDrawn(page: Page, i = 0) {
	const viewer = page.getByTestId('mesh-viewer').nth(i);
	await expect(viewer).toHaveAttribute('data-overlays', /^(ready|failed)$/, { timeout: 60_000 });
	if ((await viewer.getAttribute('data-overlays')) !== 'ready') throw new Error(`viewer ${i}: overlays failed: ${await viewer.innerText()}`);
}

async function openSampler(page: Page, query = '') {
	await page.goto(`/dev/viewer?mesh=sampler${query}`);
	await overlaysDrawn(page);
}

test('the harness draws the sampler mesh: canvas pixels are not blank', async ({ page }) => {
	await openSampler(page);
	const h = await hook(page);
	expect(h.status).toBe('ready');
	expect(h.triangles).toBe(sampleReport().faces);
	// preserveDrawingBuffer is on, so the last frame can be read back through a 2D canvas.
	const px = await page.evaluate(() => {
		(window as unknown as { __shellgateViewer: Hook }).__shellgateViewer.render();
		const gl = document.querySelector<HTMLCanvasElement>('[data-testid="viewer-canvas"] canvas')!;
		const c = document.createElement('canvas');
		c.width = gl.width;
		c.height = gl.height;
		const ctx = c.getContext('2d')!;
		ctx.drawImage(gl, 0, 0);
		const data = ctx.getImageData(0, 0, c.width, c.height).data;
		let lit = 0;
		const shades = new Set<number>();
		// Clear colour is ink-950 #0c1117.
		for (let i = 0; i < data.length; i += 4) {
			if (Math.abs(data[i] - 0x0c) + Math.abs(data[i + 1] - 0x11) + Math.abs(data[i + 2] - 0x17) > 24) lit++;
			shades.add((data[i] << 16) | (data[i + 1] << 8) | data[i + 2]);
		}
		return { lit, total: data.length / 4, shades: shades.size };
	});
	expect(px.lit / px.total).toBeGreaterThan(0.03);
	expect(px.shades).toBeGreaterThan(20);
	await page.screenshot({ path: shot('viewer-sampler'), fullPage: true });
});

test('the findings list shows the counts of the report', async ({ page }) => {
	await openSampler(page);
	const r = sampleReport();
	const expected: Record<string, number> = {
		holes: r.boundaryLoops,
		nonManifoldEdges: r.nonManifoldEdges,
		nonManifoldVertices: r.nonManifoldVertices,
		selfIntersections: r.selfIntersectingPairs ?? -1,
		shortEdges: r.shortEdges,
		degenerateFaces: r.degenerateFaces,
		flippedFaces: r.flippedFaces,
		floatingShells: r.hints.find((x) => x.kind === 'floating-shells')?.count ?? 0
	};
	// The sampler has at least one of each.
	for (const [kind, n] of Object.entries(expected)) {
		expect(n, kind).toBeGreaterThan(0);
		await expect(page.getByTestId(`finding-count-${kind}`)).toHaveText(n.toLocaleString('en'));
	}
	await expect(page.getByTestId('overlay-toggle-holes')).toBeChecked();
	await page.getByLabel('Show holes overlay').uncheck();
	await expect(page.getByTestId('overlay-toggle-holes')).not.toBeChecked();
});

test('clicking a hole in the findings list flies the camera to it', async ({ page }) => {
	await openSampler(page);
	const before = (await hook(page)).camera;
	await page.getByTestId('finding-group-holes').click();
	await page.getByTestId('finding-item-holes:0').click();
	await page.waitForFunction(() => (window as unknown as { __shellgateViewer: Hook }).__shellgateViewer.camera.animating === false);
	const after = (await hook(page)).camera;
	const moved = Math.hypot(...after.position.map((x, i) => x - before.position[i]));
	expect(moved).toBeGreaterThan(10);
	const r = sampleReport();
	// The camera now looks at the hole's centroid (float32 on the GPU side: 1e-3 mm).
	after.target.forEach((x, i) => expect(Math.abs(x - r.holes[0].centroid[i])).toBeLessThan(1e-3));
	await expect(page.getByTestId('finding-item-holes:0')).toHaveAttribute('aria-current', 'true');
	await page.screenshot({ path: shot('viewer-hole'), fullPage: true });
});

test('a click on the part reports the picked face for a new comment', async ({ page }) => {
	await openSampler(page);
	const box = (await page.getByTestId('viewer-canvas').boundingBox())!;
	await page.mouse.click(box.x + box.width / 2, box.y + box.height / 2);
	await expect(page.getByTestId('harness-last-pick')).toContainText(/face \d+ shell 0/);
});

test('changing the flow direction leaves the renderer holding as many geometries and textures as before', async ({ page }) => {
	await openSampler(page);
	const memory = () =>
		page.evaluate(() => {
			const h = (window as unknown as { __shellgateViewer: Hook }).__shellgateViewer;
			h.render();
			return h.gpuMemory();
		});
	// One flow change first, so the inset's arrow and label have been uploaded once at the new size.
	await page.evaluate(() => (window as unknown as { __shellgateViewer: Hook }).__shellgateViewer.setFlowDirection([0, 1, 0]));
	const start = await memory();
	expect(start.geometries).toBeGreaterThan(0);
	for (const f of [[1, 0, 0], [0, 0, 1], [0, -1, 0], [1, 1, 0]] as [number, number, number][]) {
		await page.evaluate((d) => (window as unknown as { __shellgateViewer: Hook }).__shellgateViewer.setFlowDirection(d), f);
	}
	expect(await memory()).toEqual(start);
});

test('the section plane position is shown in model units and can be typed in', async ({ page }) => {
	await openSampler(page);
	await page.getByTestId('viewer-section').check();
	const pos = page.getByTestId('viewer-section-position');
	const slider = page.getByTestId('viewer-section-slider');
	// The sampler runs from about -240 mm to +240 mm along x; the slider starts half way.
	expect(Math.abs(Number(await pos.inputValue()))).toBeLessThan(20);
	await pos.fill('120');
	await pos.press('Enter');
	await expect(pos).toHaveValue('120.00');
	const t = Number(await slider.inputValue());
	expect(t).toBeGreaterThan(0.7);
	expect(t).toBeLessThan(0.8);
	// Beyond the part: held at its end.
	await pos.fill('9999');
	await pos.press('Enter');
	await expect(slider).toHaveValue('1');
	await page.screenshot({ path: shot('viewer-section-typed'), fullPage: true });
});

test('compare can be pointed at another revision and switched off; deviation shows the value under the pointer', async ({ page }) => {
	await openSampler(page, '&compare=1');
	const viewer = page.getByTestId('mesh-viewer');
	const pick = page.getByTestId('viewer-compare-with');
	await expect(pick.locator('option:checked')).toHaveText('rev 2');
	await expect(viewer).toHaveAttribute('data-compare', 'ready', { timeout: 60_000 });
	await page.screenshot({ path: shot('viewer-compare-side'), fullPage: true });
	await pick.selectOption({ label: 'rev 3' });
	await expect(page.getByTestId('viewer-compare-mode')).toBeVisible();
	await expect(viewer).toHaveAttribute('data-compare', 'ready', { timeout: 60_000 });
	await page.getByTestId('viewer-compare-mode').selectOption('deviation');
	await expect(page.getByTestId('viewer-deviation')).toContainText('max', { timeout: 60_000 });
	const ticks = await page.getByTestId('viewer-deviation-ticks').locator('span').allTextContents();
	expect(ticks).toHaveLength(3);
	for (const t of ticks) expect(t).toMatch(/\d/);
	const box = (await page.getByTestId('viewer-canvas').boundingBox())!;
	await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
	await page.mouse.move(box.x + box.width / 2 + 3, box.y + box.height / 2 + 2);
	await expect(page.getByTestId('viewer-hover-deviation')).toContainText(/deviation \d/);
	await page.screenshot({ path: shot('viewer-deviation-hover'), fullPage: true });
	await pick.selectOption({ label: 'nothing (off)' });
	await expect(page.getByTestId('viewer-compare-mode')).toHaveCount(0);
	await expect(page.getByTestId('viewer-deviation')).toHaveCount(0);
	await expect(viewer).toHaveAttribute('data-compare', 'idle');
	await page.screenshot({ path: shot('viewer-compare-off'), fullPage: true });
});

test('opening and closing a second viewer, and flow changes, leave every renderer holding what it held before', async ({ page }) => {
	type W = { __shellgateViewers: (Hook | undefined)[]; __shellgateViewerLeft?: { geometries: number; textures: number }[] };
	const memory = (i: number) =>
		page.evaluate((k) => {
			const h = (window as unknown as W).__shellgateViewers[k]!;
			h.render();
			return h.gpuMemory();
		}, i);
	const left = () => page.evaluate(() => (window as unknown as W).__shellgateViewerLeft ?? []);
	await openSampler(page, '&second=1');
	await overlaysDrawn(page, 1);
	// One flow change first, so the inset's arrow and label have been uploaded once at the new size.
	await page.evaluate(() => (window as unknown as W).__shellgateViewers[0]!.setFlowDirection([0, 1, 0]));
	const first = await memory(0);
	expect(first.textures).toBeGreaterThan(0);
	expect((await memory(1)).geometries).toBeGreaterThan(0);
	const toggle = page.getByTestId('harness-toggle-second');
	for (let round = 1; round <= 2; round++) {
		await toggle.click();
		await expect(page.getByTestId('mesh-viewer')).toHaveCount(1);
		// The closed viewer's renderer held nothing when it was disposed.
		await expect.poll(async () => (await left()).length).toBe(round);
		expect((await left())[round - 1]).toEqual({ geometries: 0, textures: 0 });
		// The first viewer kept its own textures and buffers.
		expect(await memory(0)).toEqual(first);
		await toggle.click();
		await overlaysDrawn(page, 1);
	}
	for (const f of [[1, 0, 0], [0, 0, 1], [0, -1, 0], [1, 1, 0], [0, 1, 0]] as [number, number, number][]) {
		await page.evaluate((d) => (window as unknown as W).__shellgateViewers[0]!.setFlowDirection(d), f);
	}
	expect(await memory(0)).toEqual(first);
	await page.screenshot({ path: shot('viewer-two-viewers'), fullPage: true });
});

test('a binary STL over 300,000 triangles is drawn from its own triangles first, then welded, with overlays, stand-in and picking', async ({ page }) => {
	// The large-part path (viewer-state.svelte.ts): file's triangles, first frame, then the reader.
	const bytes = Buffer.from(writeBinaryStl(defectSampler(0.0105)));
	const faces = (bytes.length - 84) / 50;
	expect(faces).toBeGreaterThan(300_000);
	await page.route('**/large-part.stl', (route) => route.fulfill({ status: 200, contentType: 'application/octet-stream', body: bytes }));
	await page.goto(`/dev/viewer?url=${encodeURIComponent('/large-part.stl')}&name=large-part.stl&report=0`);
	await overlaysDrawn(page);
	const t = await page.evaluate(() => (window as unknown as { __shellgateViewer: Hook & { timings: Record<string, number> } }).__shellgateViewer.timings);
	expect(t.previewAt).toBeGreaterThan(0);
	// The reader was asked after that first frame, and the welded mesh took the file's triangles' place.
	expect(t.meshDrawnAt).toBeGreaterThanOrEqual(t.previewAt);
	expect(t.meshAt).toBeGreaterThan(t.meshDrawnAt);
	expect((await hook(page)).triangles).toBe(faces);
	await expect.poll(() => page.evaluate(() => (window as unknown as { __shellgateViewer: Hook & { timings: Record<string, number> } }).__shellgateViewer.timings.bvhAt ?? 0), { timeout: 60_000 }).toBeGreaterThan(0);
	const after = await page.evaluate(() => (window as unknown as { __shellgateViewer: Hook & { timings: Record<string, number> } }).__shellgateViewer.timings);
	expect(after.proxyTriangles).toBeGreaterThan(0);
	const box = (await page.getByTestId('viewer-canvas').boundingBox())!;
	await page.mouse.click(box.x + box.width / 2, box.y + box.height / 2);
	await expect(page.getByTestId('harness-last-pick')).toContainText(/face \d+ shell \d+/);
	await page.screenshot({ path: shot('viewer-large-part') });
});
