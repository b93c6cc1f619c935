import { fileURLToPath } from 'node:url';
import { defineConfig } from 'vitest/config';

// Browser tests run against the production build (`node build`), started once by the global
// setup on a throwaway data folder with the demo scenario loaded.
export default defineConfig({
	resolve: { alias: { $lib: fileURLToPath(new URL('./src/lib', import.meta.url)) } },
	test: {
		include: ['tests/e2e/**/*.e2e.ts'],
		globalSetup: ['tests/e2e/global-setup.ts'],
		hookTimeout: 60_000,
		testTimeout: 60_000,
		fileParallelism: false,
		pool: 'forks'
	}
});
