import tailwindcss from '@tailwindcss/vite';
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	test: {
		include: ['src/**/*.test.ts', 'tests/unit/**/*.test.ts', 'tests/integration/**/*.test.ts'],
		environment: 'node',
		// Integration tests share one test database: run files one after another.
		fileParallelism: false,
		testTimeout: 30_000,
		hookTimeout: 60_000
	}
});
