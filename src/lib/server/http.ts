import { json } from '@sveltejs/kit';
import { createHash } from 'node:crypto';

/** What public, cacheable answers say to browsers and shared caches. */
export const PUBLIC_CACHE_CONTROL = 'public, max-age=60';

/** A strong validator: the SHA-256 of the exact bytes sent, quoted as RFC 9110 §8.8.3 wants. */
export function strongEtag(body: string | Uint8Array): string {
	return `"${createHash('sha256').update(body).digest('base64url')}"`;
}

/**
 * Whether If-None-Match names this entity tag. RFC 9110 §13.1.2: the header is a list (or `*`),
 * and it is compared weakly, so `W/"x"` matches `"x"`.
 */
export function ifNoneMatchMatches(request: Request, etag: string): boolean {
	return etagListMatches(request.headers.get('if-none-match'), etag);
}

/** Whether an If-None-Match value (a list of entity tags, or `*`) names `etag`, compared weakly. */
export function etagListMatches(header: string | null, etag: string): boolean {
	if (!header) return false;
	if (header.trim() === '*') return true;
	const opaque = (tag: string) => tag.trim().replace(/^W\//, '');
	const wanted = opaque(etag);
	return header.split(',').some((tag) => opaque(tag) === wanted);
}

export interface EtagInit {
	status?: number;
	headers?: HeadersInit;
	/** When the caller knows the tag before it has the bytes (to skip costly work on a 304). */
	etag?: string;
}

function cacheHeaders(etag: string, init: HeadersInit | undefined): Headers {
	const headers = new Headers(init);
	headers.set('etag', etag);
	if (!headers.has('cache-control')) headers.set('cache-control', PUBLIC_CACHE_CONTROL);
	return headers;
}

/** 304 Not Modified; RFC 9110 §15.4.5: it repeats the ETag and Cache-Control of the 200. */
export function notModified(etag: string, headers?: HeadersInit): Response {
	return new Response(null, { status: 304, headers: cacheHeaders(etag, headers) });
}

/** `body` with a strong ETag, or 304 when the client already holds exactly these bytes. */
export function withEtag(
	request: Request,
	body: string | Uint8Array<ArrayBuffer>,
	init: EtagInit = {}
): Response {
	const etag = init.etag ?? strongEtag(body);
	if (ifNoneMatchMatches(request, etag)) return notModified(etag, init.headers);
	return new Response(body, {
		status: init.status ?? 200,
		headers: cacheHeaders(etag, init.headers)
	});
}

/** JSON with a strong ETag (SHA-256 of the body) and `Cache-Control: public, max-age=60`. */
export function jsonWithEtag(request: Request, data: unknown, init: EtagInit = {}): Response {
	const headers = new Headers(init.headers);
	headers.set('content-type', 'application/json; charset=utf-8');
	return withEtag(request, JSON.stringify(data), { ...init, headers });
}

/** A JSON error a script can read: `{ "message": "…" }`, never cached by shared caches. */
export function jsonError(status: number, message: string): Response {
	return json({ message }, { status, headers: { 'cache-control': 'no-store' } });
}
