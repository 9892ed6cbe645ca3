import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [tailwindcss(), sveltekit()],
	server: {
		host: '127.0.0.1',
		watch: { ignored: ['**/.data/**', '**/.pgdata/**', '**/build/**', '**/test-results/**'] }
	},
	test: {
		include: ['src/**/*.spec.ts', 'tests/**/*.spec.ts'],
		exclude: ['tests/**/*.e2e.ts', 'node_modules/**'],
		environment: 'node',
		testTimeout: 30_000,
		hookTimeout: 60_000,
		pool: 'forks',
		maxWorkers: 2,
		expect: { requireAssertions: true }
	}
});
