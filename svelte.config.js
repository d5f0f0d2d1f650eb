import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's origin check on form posts stays on (the default): cross-site posts get 403.
		// BUILD_DIR lets two builds of one checkout live side by side (default build/).
		adapter: adapter({ out: process.env.BUILD_DIR ?? 'build' })
	}
};

export default config;
