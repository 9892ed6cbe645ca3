import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import { build as esbuild } from 'esbuild';
import { existsSync } from 'node:fs';
import type { Plugin } from 'vite';
import { defineConfig } from 'vitest/config';

/**
 * The engine's worker threads load a file of their own, which the adapter's server bundle would not keep: after the
 * adapter has written build/, bundle src/lib/server/engine-worker.ts with its dependencies into build/engine-worker.js
 * (engine-pool.ts finds it there).
 */
function engineWorker(): Plugin {
	return {
		name: 'escapement:engine-worker',
		apply: 'build',
		closeBundle: {
			order: 'post',
			sequential: true,
			async handler() {
				if (!existsSync('build/handler.js')) return; // the client build, or before the adapter ran
				await esbuild({
					entryPoints: ['src/lib/server/engine-worker.ts'],
					outfile: 'build/engine-worker.js',
					bundle: true,
					platform: 'node',
					format: 'esm',
					target: 'node20',
					sourcemap: true,
					logLevel: 'warning'
				});
			}
		}
	};
}

export default defineConfig({
	plugins: [tailwindcss(), sveltekit(), engineWorker()],
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
