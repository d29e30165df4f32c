import { defineConfig } from 'vitest/config';

// `npm run test:cluster`: the cluster tests (tests/cluster), not part of `npm test`. The
// global set-up starts three Galera nodes, HAProxy, the mail sink and two app processes
// (scripts/lib/cluster.mjs); the tests run one after the other, since several of them
// stop or slow a node the others use.
export default defineConfig({
	test: {
		include: ['tests/cluster/**/*.test.ts'],
		environment: 'node',
		globalSetup: ['tests/cluster/global-setup.ts'],
		setupFiles: ['tests/cluster/setup.ts'],
		fileParallelism: false,
		testTimeout: 180_000,
		hookTimeout: 600_000
	}
});
