import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	compilerOptions: { runes: true },
	kit: {
		adapter: adapter(),
		// Uploads of multi-gigabyte clips go through tus in chunks; forms stay small.
		csrf: { trustedOrigins: [] }
	}
};

export default config;
