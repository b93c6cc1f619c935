import type { Handle } from '@sveltejs/kit';
import { appOrigin } from './config';

/** Two years, the value browsers' preload lists ask for. */
export const HSTS = 'max-age=63072000; includeSubDomains';

// Headers every response gets. The page policy (nonces, directives) is SvelteKit's, from `kit.csp`
// in svelte.config.js; nothing is embeddable elsewhere, so no page may be framed.
const ALWAYS: Record<string, string> = {
	'x-content-type-options': 'nosniff',
	'referrer-policy': 'strict-origin-when-cross-origin',
	'x-frame-options': 'DENY'
};

// What SvelteKit does not render (APIs, PDFs, images, feeds, redirects) only gets the framing
// rule: a wider policy on a PDF makes Chromium's viewer, a page of its own, fail to draw.
const NON_PAGE_POLICY = "frame-ancestors 'none'";

function loopback(hostname: string): boolean {
	return (
		hostname === 'localhost' ||
		hostname.endsWith('.localhost') ||
		hostname === '[::1]' ||
		/^127(\.\d{1,3}){3}$/.test(hostname)
	);
}

/** True when the app's public origin is https (cookies are then Secure). */
export function httpsOrigin(origin: string = appOrigin()): boolean {
	return new URL(origin).protocol === 'https:';
}

/**
 * The Strict-Transport-Security value for an origin, or null: only https origins send it, and
 * never a loopback host, where it would stick to every other local project on that name.
 */
export function strictTransportSecurity(origin: string = appOrigin()): string | null {
	const url = new URL(origin);
	return url.protocol === 'https:' && !loopback(url.hostname) ? HSTS : null;
}

/** The headers added to a response, given the app's origin and the response's own headers. */
export function securityHeaderValues(origin: string, existing: Headers): Record<string, string> {
	const values = { ...ALWAYS };
	const hsts = strictTransportSecurity(origin);
	if (hsts) values['strict-transport-security'] = hsts;
	if (!existing.has('content-security-policy')) values['content-security-policy'] = NON_PAGE_POLICY;
	return values;
}

export const securityHeaders: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	for (const [name, value] of Object.entries(securityHeaderValues(appOrigin(), response.headers))) {
		response.headers.set(name, value);
	}
	return response;
};
