// `npm run build:cli`: the command line (src/lib/mesh/cli.ts) bundled ahead into plain JavaScript,
// dist-cli/cli.js, so it starts without transpiling TypeScript. Its worker threads (self-intersections,
// walls and gaps) load a second, smaller bundle of their two modules only, dist-cli/engine-workers.js,
// and run their worker side (module-worker-node.ts): a thread then compiles a fifth of the code (no
// readers, report or polygon clipping), which is on the path of a 35 k mesh's whole run.
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
const workersFile = join(root, 'dist-cli/engine-workers.js');
// import.meta.url in the sources is a module's own URL, which its worker threads load: in both
// bundles it becomes the workers bundle's URL (a sibling of this file).
const WORKERS_URL = "require('node:url').pathToFileURL(require('node:path').join(__dirname, 'engine-workers.js')).href";

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
		built = Math.min(statSync(outfile).mtimeMs, statSync(workersFile).mtimeMs);
		statSync(join(dirname(outfile), 'package.json'));
	} catch {
		return true;
	}
	const inputs = [newestSource(join(root, 'src/lib/mesh')), statSync(fileURLToPath(import.meta.url)).mtimeMs, statSync(join(root, 'package-lock.json')).mtimeMs];
	return inputs.some((t) => t > built);
}

if (!process.argv.includes('--if-stale') || stale()) {
	const common = {
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
			js: ['"use strict";', `if (require('node:worker_threads').isMainThread) require('node:v8').setFlagsFromString('--no-concurrent-osr');`, `const __shellgateModuleUrl = ${WORKERS_URL};`].join('\n')
		},
		legalComments: 'none',
		logLevel: 'warning'
	};
	await build({ ...common, entryPoints: [join(root, 'src/lib/mesh/cli.ts')], outfile });
	// The workers bundle: the two worker modules, whose module-level check runs their worker side.
	await build({
		...common,
		stdin: { contents: "import './self-intersect-node';\nimport './thickness-node';\n", resolveDir: join(root, 'src/lib/mesh'), sourcefile: 'engine-workers.ts', loader: 'ts' },
		outfile: workersFile
	});
	// The project's package.json says "type": "module"; this folder's own says the bundles are not.
	mkdirSync(dirname(outfile), { recursive: true });
	writeFileSync(join(dirname(outfile), 'package.json'), '{ "type": "commonjs" }\n');
}
