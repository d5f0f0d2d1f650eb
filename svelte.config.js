import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		// SvelteKit's origin check on form posts stays on (the default): cross-site posts get 403.
		adapter: adapter()
	}
};

export default config;
