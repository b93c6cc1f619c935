import { json, text, type Handle } from '@sveltejs/kit';

const FORM_TYPES = [
	'application/x-www-form-urlencoded',
	'multipart/form-data',
	'text/plain',
	'application/x-sveltekit-formdata'
];
const UNSAFE_METHODS = ['POST', 'PUT', 'PATCH', 'DELETE'];
/** Paths that take cross-site form posts on purpose (RFC 8058 one-click unsubscribe). */
const CROSS_SITE_FORM_PATHS = /^\/api\/unsubscribe\/[^/]+$/;

/**
 * Cross-site request forgery: a form post from another origin (or with no Origin) is refused,
 * as SvelteKit's own check would, except on the one-click unsubscribe endpoint.
 */
export const sameOriginForms: Handle = ({ event, resolve }) => {
	const { request, url } = event;
	const type = request.headers.get('content-type')?.split(';', 1)[0].trim().toLowerCase() ?? '';
	if (
		UNSAFE_METHODS.includes(request.method) &&
		FORM_TYPES.includes(type) &&
		request.headers.get('origin') !== url.origin &&
		!CROSS_SITE_FORM_PATHS.test(url.pathname)
	) {
		const message = `Cross-site ${request.method} form submissions are forbidden`;
		return request.headers.get('accept') === 'application/json'
			? json({ message }, { status: 403 })
			: text(message, { status: 403 });
	}
	return resolve(event);
};
