import type { Handle } from '@sveltejs/kit';

// Rendered pages and JSON answers gzip-compressed when the browser accepts it: a patient page with
// its journey is about 125 KB of HTML and 11 KB compressed, for about 5 ms of CPU. adapter-node
// compresses the built files (precompress) but not what the app renders. Behind a proxy that
// compresses, `COMPRESS_RESPONSES=off` leaves the work to it.

/** Below this a compressed answer saves less than its own overhead. */
const MIN_BYTES = 1024;

const COMPRESSIBLE =
	/^(text\/(html|plain|csv|css|xml)|application\/([a-z.+-]*\+)?(json|xml|javascript))\b/i;

/** Whether Accept-Encoding (RFC 9110 §12.5.3) allows gzip: named or `*`, with a weight above 0. */
export function acceptsGzip(acceptEncoding: string | null): boolean {
	if (!acceptEncoding) return false;
	let gzip: number | undefined;
	let any: number | undefined;
	for (const part of acceptEncoding.split(',')) {
		const [name, ...params] = part.trim().toLowerCase().split(';');
		const q = params.map((p) => p.trim()).find((p) => p.startsWith('q='));
		const weight = q ? Number(q.slice(2)) : 1;
		const value = Number.isFinite(weight) ? weight : 0;
		if (name.trim() === 'gzip' || name.trim() === 'x-gzip') gzip = value;
		else if (name.trim() === '*') any = value;
	}
	return (gzip ?? any ?? 0) > 0;
}

/** Off behind a proxy that compresses (`COMPRESS_RESPONSES=off`). */
export function compressionOn(): boolean {
	return process.env.COMPRESS_RESPONSES !== 'off';
}

/**
 * Whether an answer is worth compressing: a body of known length (streamed answers, whose length
 * is unknown, would wait for the compressor), text, not already encoded, not marked no-transform.
 */
export function compressible(status: number, headers: Headers, length: number): boolean {
	if (status < 200 || status === 204 || status === 206) return false;
	if (headers.has('content-encoding')) return false;
	if (/\bno-transform\b/i.test(headers.get('cache-control') ?? '')) return false;
	if (!(length >= MIN_BYTES)) return false;
	return COMPRESSIBLE.test(headers.get('content-type') ?? '');
}

/** A Vary value that names Accept-Encoding (kept as it is when it already does, or is `*`). */
export function withAcceptEncoding(vary: string | null): string {
	if (vary && /(^|,)\s*(accept-encoding|\*)\s*(,|$)/i.test(vary)) return vary;
	return vary ? `${vary}, Accept-Encoding` : 'Accept-Encoding';
}

export const compressResponses: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (!compressionOn() || event.request.method === 'HEAD' || !response.body) return response;
	const length = Number(response.headers.get('content-length') ?? NaN);
	if (!compressible(response.status, response.headers, length)) return response;
	const headers = new Headers(response.headers);
	headers.set('vary', withAcceptEncoding(headers.get('vary')));
	if (!acceptsGzip(event.request.headers.get('accept-encoding'))) {
		return new Response(response.body, {
			status: response.status,
			statusText: response.statusText,
			headers
		});
	}
	headers.set('content-encoding', 'gzip');
	headers.delete('content-length');
	// The compressed bytes differ from the ones the strong validator named (RFC 9110 §8.8.1).
	const etag = headers.get('etag');
	if (etag && !etag.startsWith('W/')) headers.set('etag', `W/${etag}`);
	return new Response(response.body!.pipeThrough(new CompressionStream('gzip')), {
		status: response.status,
		statusText: response.statusText,
		headers
	});
};
