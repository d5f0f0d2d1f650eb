// `npm run build:cli`: the command line (src/lib/mesh/cli.ts) bundled ahead into one plain
// JavaScript file, dist-cli/cli.js, so it starts without transpiling TypeScript. Its worker threads
// load the same file by its own URL (module-worker-node.ts) and run only their worker side.
// The bundle is CommonJS (dist-cli/package.json says so): Node starts a CommonJS entry without
// setting up its ES module loader, a few milliseconds of every run (README, "Engine bench").
//
//   node scripts/build-cli.mjs             build
//   node scripts/build-cli.mjs --if-stale  build only when a source under src/lib/mesh is newer
import { build } from 'esbuild';
import { mkdirSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const outfile = join(root, 'dist-cli/cli.js');
// import.meta.url in the sources (a module's own URL, for its worker threads) becomes this file's URL.
const META_URL = "require('node:url').pathToFileURL(__filename).href";

function newestSource(dir) {
	let t = 0;
	for (const e of readdirSync(dir, { withFileTypes: true })) {
		const p = join(dir, e.name);
		if (e.isDirectory()) t = Math.max(t, newestSource(p));
		else if (e.name.endsWith('.ts') && !e.name.endsWith('.test.ts')) t = Math.max(t, statSync(p).mtimeMs);
	}
	return t;
}

function stale() {
	let built;
	try {
		built = statSync(outfile).mtimeMs;
		statSync(join(dirname(outfile), 'package.json'));
	} catch {
		return true;
	}
	const inputs = [newestSource(join(root, 'src/lib/mesh')), statSync(fileURLToPath(import.meta.url)).mtimeMs, statSync(join(root, 'package-lock.json')).mtimeMs];
	return inputs.some((t) => t > built);
}

if (!process.argv.includes('--if-stale') || stale()) {
	await build({
		entryPoints: [join(root, 'src/lib/mesh/cli.ts')],
		outfile,
		bundle: true,
		platform: 'node',
		format: 'cjs',
		target: 'node20',
		define: { 'import.meta.url': '__shellgateModuleUrl' },
		// --no-concurrent-osr: a fresh process spends its time in loops that run once each, long
		// enough to want optimised code; compiled on the spot instead of on a helper thread, a loop
		// switches to it at once rather than running on in the interpreter while the helper competes
		// for the same cores (less CPU; README, "Engine bench"). Set before any other code of the
		// bundle runs; V8 flags are per process, so its worker threads have it too.
		banner: {
			// "use strict" first, as the sources are ES modules (strict code) and the banner comes before esbuild's own.
			js: ['"use strict";', `require('node:v8').setFlagsFromString('--no-concurrent-osr');`, `const __shellgateModuleUrl = ${META_URL};`].join('\n')
		},
		legalComments: 'none',
		logLevel: 'warning'
	});
	// The project's package.json says "type": "module"; this folder's own says the bundle is not.
	mkdirSync(dirname(outfile), { recursive: true });
	writeFileSync(join(dirname(outfile), 'package.json'), '{ "type": "commonjs" }\n');
}
