import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: { port: 5173 },
	test: {
		include: ['src/**/*.spec.ts', 'scripts/**/*.spec.ts'],
		environment: 'node',
		expect: { requireAssertions: true },
		testTimeout: 60_000,
		hookTimeout: 60_000
	}
});
