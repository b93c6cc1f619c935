import type { RequestEvent } from '@sveltejs/kit';
import { gunzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { acceptsGzip, compressResponses } from './compression';

const HTML = `<!doctype html><html lang="en"><body>${'<p>Perla swims home past the reef.</p>'.repeat(100)}</body></html>`;

async function answer(
	response: Response,
	request: RequestInit & { url?: string } = { headers: { 'accept-encoding': 'gzip, deflate, br' } }
): Promise<Response> {
	const event = {
		request: new Request(request.url ?? 'http://127.0.0.1/stories/perla-swims-home', request)
	} as RequestEvent;
	return compressResponses({ event, resolve: async () => response });
}

function page(body = HTML, headers: Record<string, string> = {}): Response {
	return new Response(body, {
		headers: {
			'content-type': 'text/html',
			'content-length': String(Buffer.byteLength(body)),
			etag: '"1x2y3z"',
			...headers
		}
	});
}

describe('compressResponses', () => {
	it('gzips a rendered page for a browser that accepts it; zlib reads back the same page', async () => {
		const res = await answer(page());
		expect(res.headers.get('content-encoding')).toBe('gzip');
		expect(res.headers.get('content-length')).toBeNull();
		expect(res.headers.get('vary')).toBe('Accept-Encoding');
		expect(res.headers.get('etag')).toBe('W/"1x2y3z"');
		const bytes = Buffer.from(await res.arrayBuffer());
		// Node's own zlib, not the code under test, decodes it.
		expect(gunzipSync(bytes).toString('utf8')).toBe(HTML);
		expect(bytes.length).toBeLessThan(Buffer.byteLength(HTML) / 4);
	});

	it('keeps the other headers and the status', async () => {
		const res = await answer(
			page(HTML, { 'content-security-policy': "default-src 'self'", 'x-frame-options': 'DENY' })
		);
		expect(res.status).toBe(200);
		expect(res.headers.get('content-security-policy')).toBe("default-src 'self'");
		expect(res.headers.get('x-frame-options')).toBe('DENY');
		expect(res.headers.get('content-type')).toBe('text/html');
	});

	it('sends the page as it is (with Vary) when the browser does not accept gzip', async () => {
		for (const accept of [undefined, 'identity', 'br', 'gzip;q=0, br', '*;q=0']) {
			const res = await answer(page(), { headers: accept ? { 'accept-encoding': accept } : {} });
			expect(res.headers.get('content-encoding'), accept).toBeNull();
			expect(res.headers.get('vary'), accept).toBe('Accept-Encoding');
			expect(await res.text(), accept).toBe(HTML);
		}
	});

	it('leaves alone what is small, binary, already encoded, streamed, no-transform or a HEAD', async () => {
		const cases: [string, Response, RequestInit?][] = [
			['small', page('<p>Hi</p>')],
			[
				'image',
				new Response(new Uint8Array(4096), {
					headers: { 'content-type': 'image/webp', 'content-length': '4096' }
				})
			],
			['encoded', page(HTML, { 'content-encoding': 'br' })],
			['no-transform', page(HTML, { 'cache-control': 'public, no-transform' })],
			[
				'streamed',
				new Response(new Blob([HTML]).stream(), { headers: { 'content-type': 'text/html' } })
			],
			['head', page(), { method: 'HEAD', headers: { 'accept-encoding': 'gzip' } }]
		];
		for (const [name, response, request] of cases) {
			const res = await answer(response, request);
			expect(res, name).toBe(response);
		}
	});

	it('leaves everything to a proxy with COMPRESS_RESPONSES=off', async () => {
		process.env.COMPRESS_RESPONSES = 'off';
		try {
			const response = page();
			expect(await answer(response)).toBe(response);
		} finally {
			delete process.env.COMPRESS_RESPONSES;
		}
	});

	it('adds Accept-Encoding to an existing Vary once', async () => {
		const res = await answer(page(HTML, { vary: 'Cookie' }));
		expect(res.headers.get('vary')).toBe('Cookie, Accept-Encoding');
		const again = await answer(page(HTML, { vary: 'accept-encoding' }));
		expect(again.headers.get('vary')).toBe('accept-encoding');
	});

	it('compresses JSON answers too', async () => {
		const json = JSON.stringify({ type: 'FeatureCollection', features: Array(200).fill(null) });
		const res = await answer(
			new Response(json, {
				headers: {
					'content-type': 'application/geo+json',
					'content-length': String(json.length)
				}
			})
		);
		expect(res.headers.get('content-encoding')).toBe('gzip');
		expect(gunzipSync(Buffer.from(await res.arrayBuffer())).toString()).toBe(json);
	});
});

describe('acceptsGzip (RFC 9110 §12.5.3)', () => {
	it.each([
		['gzip', true],
		['gzip, deflate, br', true],
		['br;q=1.0, gzip;q=0.8, *;q=0.1', true],
		['*', true],
		['x-gzip', true],
		['gzip;q=0', false],
		['br, *;q=0', false],
		['identity', false],
		['', false]
	])('%s → %s', (header, expected) => {
		expect(acceptsGzip(header)).toBe(expected);
	});
});
