import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	test: {
		include: ['tests/**/*.test.ts'],
		environment: 'node',
		// Integration and browser tests share one PostgreSQL and one app server: run files one at a time.
		fileParallelism: false,
		testTimeout: 30_000,
		hookTimeout: 120_000
	}
});
