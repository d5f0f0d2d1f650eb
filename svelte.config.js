import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's own origin check is off ('*') because it refuses every form post without an
		// Origin header, API uploads by a bearer token included. src/hooks.server.ts makes the same
		// check instead and exempts only requests authenticated by a bearer token alone (no session
		// cookie): a cross-site page cannot make the browser send such a header.
		csrf: { trustedOrigins: ['*'] },
		// BUILD_DIR lets two builds of one checkout live side by side (default build/).
		adapter: adapter({ out: process.env.BUILD_DIR ?? 'build' })
	}
};

export default config;
