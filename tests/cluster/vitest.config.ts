// The cluster tests (`npm run test:cluster`): run only by scripts/test-cluster.mjs, which starts the
// Galera cluster, two app instances and HAProxy first. One file at a time: they share the cluster, and
// one of them kills a database node. Run from the checkout's root (SvelteKit sets Vite's root to it); the file
// lives here so that the top level stays as the design card lists it.
import { sveltekit } from '@sveltejs/kit/vite';
import { defineConfig } from 'vitest/config';

export default defineConfig({
	plugins: [sveltekit()],
	test: {
		name: 'cluster',
		include: ['tests/cluster/**/*.test.ts'],
		environment: 'node',
		testTimeout: 300_000,
		hookTimeout: 300_000,
		fileParallelism: false
	}
});
