import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	test: {
		include: ['src/**/*.spec.ts', 'tests/integration/**/*.test.ts'],
		environment: 'node',
		// Integration tests share one database and one app server; files run one at a time.
		fileParallelism: false,
		testTimeout: 30_000,
		hookTimeout: 60_000
	}
});
