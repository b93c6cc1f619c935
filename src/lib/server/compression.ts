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

/**
 * Whether to compress this answer: a body of known length (streamed answers, whose length is
 * unknown, would wait for the compressor), text, not already encoded, not marked no-transform.
 */
function worthCompressing(request: Request, response: Response): boolean {
	if (request.method === 'HEAD' || !response.body) return false;
	if (response.status < 200 || response.status === 204 || response.status === 206) return false;
	if (response.headers.has('content-encoding')) return false;
	if (/\bno-transform\b/i.test(response.headers.get('cache-control') ?? '')) return false;
	const length = Number(response.headers.get('content-length') ?? NaN);
	if (!(length >= MIN_BYTES)) return false;
	return COMPRESSIBLE.test(response.headers.get('content-type') ?? '');
}

export const compressResponses: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (process.env.COMPRESS_RESPONSES === 'off') return response;
	if (!worthCompressing(event.request, response)) return response;
	const headers = new Headers(response.headers);
	const vary = headers.get('vary');
	if (!vary || !/(^|,)\s*(accept-encoding|\*)\s*(,|$)/i.test(vary)) {
		headers.set('vary', vary ? `${vary}, Accept-Encoding` : 'Accept-Encoding');
	}
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
