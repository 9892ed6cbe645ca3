import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';

/**
 * Fault tests: they restart the test cluster, so they run on their own after the other suites (scripts/test.sh),
 * never beside a test file that would see its connections cut.
 */
export default defineConfig({
	plugins: [sveltekit()],
	root: new URL('../..', import.meta.url).pathname,
	test: {
		include: ['tests/faults/**/*.fault.ts'],
		environment: 'node',
		testTimeout: 180_000,
		hookTimeout: 90_000,
		fileParallelism: false,
		expect: { requireAssertions: true }
	}
});
