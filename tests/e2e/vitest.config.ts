import { defineConfig } from 'vitest/config';

/** Browser tests: the built app (started by scripts/test.sh at E2E_BASE_URL) driven in Debian's chromium. */
export default defineConfig({
	test: {
		root: new URL('../..', import.meta.url).pathname,
		include: ['tests/e2e/**/*.e2e.ts'],
		testTimeout: 60_000,
		hookTimeout: 60_000,
		fileParallelism: false,
		expect: { requireAssertions: true }
	}
});
