import { sveltekit } from '@sveltejs/kit/vite';
import tailwindcss from '@tailwindcss/vite';
import type { Rollup } from 'vite';
import { defineConfig, type Plugin } from 'vitest/config';

// What every page loads (SvelteKit's client, Svelte, the root layout and error page and all they
// import) goes into one chunk instead of a dozen small ones: one file compresses better and costs
// one request, so that public pages stay under 50 KB of script (tests/e2e/page-weight.e2e.ts).
// The server build, and code that only some pages use, keep Rollup's own chunks.
const ALWAYS_LOADED =
	/(\/generated\/client-optimized\/(app|nodes\/0|nodes\/1)\.js|\/@sveltejs\/kit\/src\/runtime\/client\/entry\.js)$/;

const everyPageChunk: Plugin = {
	name: 'tideward-every-page-chunk',
	apply: 'build',
	config(config) {
		if (config.build?.ssr) return;
		let everyPage: Set<string> | undefined;
		const manualChunks: Rollup.GetManualChunk = (id, { getModuleIds, getModuleInfo }) => {
			if (!everyPage) {
				// Modules statically reachable from the entry points that load on every page.
				everyPage = new Set();
				const queue = [...getModuleIds()].filter((m) => ALWAYS_LOADED.test(m));
				for (let m = queue.pop(); m !== undefined; m = queue.pop()) {
					if (everyPage.has(m)) continue;
					everyPage.add(m);
					queue.push(...(getModuleInfo(m)?.importedIds ?? []));
				}
			}
			// The entry points themselves stay files of their own, as SvelteKit expects.
			return everyPage.has(id) && !ALWAYS_LOADED.test(id) ? 'every-page' : undefined;
		};
		return { build: { rollupOptions: { output: { manualChunks } } } };
	}
};

export default defineConfig({
	plugins: [tailwindcss(), sveltekit(), everyPageChunk],
	test: {
		include: ['src/**/*.test.ts', 'tests/unit/**/*.test.ts', 'tests/integration/**/*.test.ts'],
		globalSetup: ['tests/setup/global-db.ts'],
		hookTimeout: 30_000,
		testTimeout: 30_000,
		pool: 'forks',
		// Handlers are called directly after direct inserts: no cached public reads in between
		// (the cache has its own tests in src/lib/server/public-cache.test.ts).
		env: { PUBLIC_CACHE_MS: '0', LOG_LEVEL: 'warn' }
	}
});
