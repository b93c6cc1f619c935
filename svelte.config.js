import adapter from '@sveltejs/adapter-node';
import { vitePreprocess } from '@sveltejs/vite-plugin-svelte';

/** @type {import('@sveltejs/kit').Config} */
const config = {
	preprocess: vitePreprocess(),
	kit: {
		adapter: adapter({ out: 'build' }),
		// The server tells the browser which route a link leads to (one small request per new
		// path, made on hover), so that pages do not ship the list of every route, staff ones
		// included, nor the code to match it: about 3 KB less script on every page.
		router: { resolution: 'server' },
		// The same-origin check for form posts is done in hooks.server.ts (`sameOriginForms`), so
		// that RFC 8058 one-click unsubscribes, posted by mail clients without an Origin header,
		// can reach their endpoint; every other form post is held to the same rule as before.
		csrf: { trustedOrigins: ['*'] },
		// SvelteKit adds a nonce (rendered pages) or a hash (prerendered ones) for its own inline
		// script to script-src; nothing else may run inline. style-src keeps 'unsafe-inline': the
		// e-mail previews in /staff/mail are srcdoc frames, which inherit this policy, and MJML
		// writes <style> blocks; app.html and SvelteKit's route announcer use style attributes.
		// With 'unsafe-inline' there SvelteKit adds no nonce to style-src (a nonce would make
		// browsers ignore 'unsafe-inline'). The processor's hosted pages are in form-action because
		// a form post without JavaScript follows our 303 to them. Other headers:
		// src/lib/server/security-headers.ts.
		csp: {
			mode: 'auto',
			directives: {
				'default-src': ['self'],
				'script-src': ['self'],
				'style-src': ['self', 'unsafe-inline'],
				'img-src': ['self', 'data:', 'blob:'],
				'font-src': ['self'],
				'connect-src': ['self'],
				'worker-src': ['self'],
				'object-src': ['none'],
				'base-uri': ['self'],
				'form-action': ['self', 'https://checkout.stripe.com', 'https://billing.stripe.com'],
				'frame-ancestors': ['none']
			}
		}
	}
};

export default config;
