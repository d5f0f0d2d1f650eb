import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter(),
		// Uploads stream through the request handler; the app enforces its own limit (SHELLGATE_UPLOAD_LIMIT_MB).
		csrf: { checkOrigin: true }
	}
};

export default config;
