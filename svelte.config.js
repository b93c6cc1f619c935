import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		// The same-origin check for form posts is done in hooks.server.ts (`sameOriginForms`), so
		// that RFC 8058 one-click unsubscribes, posted by mail clients without an Origin header,
		// can reach their endpoint; every other form post is held to the same rule as before.
		csrf: { trustedOrigins: ['*'] }
	}
};

export default config;
