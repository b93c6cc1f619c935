import { json, text, type Handle } from '@sveltejs/kit';

/** Longer addresses are refused; ours are far shorter, and many proxies stop at 8 KB too. */
export const MAX_URL_LENGTH = 8 * 1024;

/**
 * What no route can use: an address longer than MAX_URL_LENGTH, or a NUL character (U+0000) in
 * the path, its parameters or the query string. PostgreSQL text cannot hold NUL, so without this
 * check such a value reached the database and failed there (a 500) instead of being refused.
 * Null when the request is readable.
 */
export function unreadableRequest(event: {
	url: URL;
	params: Partial<Record<string, string>>;
}): { status: number; message: string } | null {
	const { url, params } = event;
	if (url.href.length > MAX_URL_LENGTH) {
		return {
			status: 414,
			message: `This address is ${url.href.length.toLocaleString('en-US')} characters long; addresses on this site have at most ${MAX_URL_LENGTH.toLocaleString('en-US')}.`
		};
	}
	const values = [
		...Object.values(params),
		...url.searchParams.keys(),
		...url.searchParams.values()
	];
	if (values.some((value) => value?.includes('\u0000'))) {
		return {
			status: 400,
			message: 'This address contains a NUL character (%00), which no page uses.'
		};
	}
	return null;
}

/** The hook step: refuses unreadable requests before any route (or the session lookup) runs. */
export const refuseUnreadableRequests: Handle = ({ event, resolve }) => {
	const problem = unreadableRequest(event);
	if (!problem) return resolve(event);
	const wantsJson =
		event.url.pathname.startsWith('/api/') ||
		(event.request.headers.get('accept') ?? '').includes('application/json');
	return wantsJson
		? json({ error: problem.message }, { status: problem.status })
		: text(problem.message, { status: problem.status });
};
