import type { Handle } from '@sveltejs/kit';
import { randomBytes } from 'node:crypto';
import { createServer, request as httpRequest, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { crc32, gunzipSync } from 'node:zlib';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { compressResponses } from './compression';
import {
	answerFromCache,
	cachePublicAnswers,
	crc32Combine,
	deflatePieces,
	gzipWithNonce
} from './public-answers';
import { clearPublicCache } from './public-cache';
import { securityHeaders } from './security-headers';

const NONCE = 'cmVuZGVyZWQtbm9uY2U=';
const ORIGIN = 'http://127.0.0.1:4173';

function event(
	options: {
		route?: string;
		method?: string;
		cookie?: string;
		data?: boolean;
		path?: string;
		headers?: Record<string, string>;
	} = {}
) {
	const url = new URL(options.path ?? '/patients/perla', ORIGIN);
	return {
		request: new Request(url, { method: options.method ?? 'GET', headers: options.headers }),
		url,
		route: { id: options.route ?? '/patients/[slug]' },
		isDataRequest: options.data ?? false,
		cookies: {
			get: (name: string) => (name === 'tideward_session' ? options.cookie : undefined)
		}
	};
}
type Event = ReturnType<typeof event>;

/** A page as SvelteKit renders it: a nonce in the policy and in the inline script. */
function renderer(init: { status?: number; headers?: Record<string, string>; size?: number } = {}) {
	let renders = 0;
	const resolve = async () => {
		renders += 1;
		const filler = 'tide '.repeat(init.size ?? 400);
		return new Response(
			`<html><script nonce="${NONCE}">start()</script><p>render ${renders}</p><p>${filler}</p><script nonce="${NONCE}">end()</script></html>`,
			{
				status: init.status ?? 200,
				headers: {
					'content-type': 'text/html',
					'content-security-policy': `script-src 'self' 'nonce-${NONCE}'`,
					etag: '"x"',
					...init.headers
				}
			}
		);
	};
	return { resolve, renders: () => renders };
}

/** A public API answer with its ETag, counting the calls and what If-None-Match they saw. */
function api(body = JSON.stringify({ patients: Array(100).fill({ name: 'Coral' }) })) {
	const seen: (string | null)[] = [];
	const resolve = async (e: Event) => {
		seen.push(e.request.headers.get('if-none-match'));
		return new Response(body, {
			headers: {
				'content-type': 'application/json; charset=utf-8',
				'cache-control': 'public, max-age=60',
				etag: '"v1"'
			}
		});
	};
	return { resolve, seen, body };
}

async function withCache<T>(run: () => Promise<T>): Promise<T> {
	const previous = { ttl: process.env.PUBLIC_CACHE_MS, origin: process.env.ORIGIN };
	process.env.PUBLIC_CACHE_MS = '60000';
	process.env.ORIGIN = ORIGIN;
	clearPublicCache();
	try {
		return await run();
	} finally {
		process.env.PUBLIC_CACHE_MS = previous.ttl;
		process.env.ORIGIN = previous.origin;
		clearPublicCache();
	}
}

const serve = (e: Event, resolve: (e: Event) => Promise<Response>) =>
	cachePublicAnswers({ event: e, resolve } as never) as Promise<Response>;

/** The hooks as hooks.server.ts chains them: compression, security headers, then the store. */
const chained = (e: Event, resolve: (e: Event) => Promise<Response>) => {
	const inner: Handle = ({ event: ev }) => cachePublicAnswers({ event: ev, resolve } as never);
	const middle: Handle = ({ event: ev }) =>
		securityHeaders({
			event: ev,
			resolve: (x: never) => inner({ event: x, resolve: never })
		} as never);
	return compressResponses({
		event: e,
		resolve: (x: never) => middle({ event: x, resolve: never })
	} as never) as Promise<Response>;
};
const never = (() => {
	throw new Error('not reached');
}) as never;

const nonceIn = (policy: string | null) => /'nonce-([^']+)'/.exec(policy ?? '')?.[1];

describe('crc32Combine', () => {
	// Checked against zlib's own CRC-32 of the joined bytes (node:zlib crc32).
	it('gives the CRC-32 of two joined byte strings from their own', () => {
		for (const [a, b] of [
			[0, 0],
			[0, 5],
			[5, 0],
			[1, 1],
			[24, 127_000],
			[99_999, 24],
			[3, 65_536]
		]) {
			const first = randomBytes(a);
			const second = randomBytes(b);
			expect(crc32Combine(crc32(first), crc32(second), b), `${a}+${b}`).toBe(
				crc32(Buffer.concat([first, second]))
			);
		}
	});
});

describe('gzipWithNonce', () => {
	it('makes a gzip member that zlib reads back as the parts joined by the nonce', () => {
		const parts = [
			Buffer.from('<html><script nonce="'),
			Buffer.from('">start()</script>' + 'x'.repeat(70_000) + '<script nonce="'),
			Buffer.from(''),
			Buffer.from('">end()</script></html>')
		];
		const pieces = deflatePieces(parts);
		for (let i = 0; i < 3; i++) {
			const nonce = Buffer.from(randomBytes(16).toString('base64'));
			const gzip = Buffer.concat(gzipWithNonce(pieces, nonce));
			const expected = Buffer.concat(parts.flatMap((p, j) => (j === 0 ? [p] : [nonce, p])));
			// gunzipSync checks the CRC-32 and length in the trailer (RFC 1952 §2.3.1).
			expect(gunzipSync(gzip).equals(expected)).toBe(true);
		}
		// A damaged trailer is refused: the check above would catch a wrong CRC.
		const gzip = Buffer.concat(gzipWithNonce(pieces, Buffer.from('n')));
		gzip[gzip.length - 8] ^= 1;
		expect(() => gunzipSync(gzip)).toThrow();
	});
});

describe('cachePublicAnswers (the SvelteKit door)', () => {
	it('renders a public page once for signed-out visitors, each copy with its own nonce', () =>
		withCache(async () => {
			const page = renderer();
			const copies = [];
			for (let i = 0; i < 3; i++) copies.push(await serve(event(), page.resolve));
			expect(page.renders()).toBe(1);
			const bodies = await Promise.all(copies.map((r) => r.text()));
			expect(bodies.every((body) => body.includes('render 1'))).toBe(true);
			const nonces = copies.map((response, i) => {
				const nonce = nonceIn(response.headers.get('content-security-policy'))!;
				expect(
					bodies[i].match(new RegExp(`nonce="${nonce.replace(/[+/=]/g, '\\$&')}"`, 'g'))
				).toHaveLength(2);
				return nonce;
			});
			expect(new Set([NONCE, ...nonces]).size).toBe(4);
			expect(copies.map((r) => r.headers.get('x-tideward-cache'))).toEqual(['miss', 'hit', 'hit']);
			expect(copies[1].headers.has('etag')).toBe(false);
		}));

	it('renders every time for a signed-in visitor, a data request, a write or another route', () =>
		withCache(async () => {
			for (const e of [
				event({ cookie: 'abc' }),
				event({ data: true }),
				event({ method: 'POST' }),
				event({ route: '/account', path: '/account' }),
				event({ route: '/staff', path: '/staff' }),
				event({ route: '/api/ledger/gifts', path: '/api/ledger/gifts' })
			]) {
				const page = renderer();
				await serve(e, page.resolve);
				await serve(e, page.resolve);
				expect(page.renders(), `${e.request.method} ${e.route.id}`).toBe(2);
			}
		}));

	it('keeps no copy of an error, a cookie, a private answer, or one made during a change', () =>
		withCache(async () => {
			const kinds: { status?: number; headers?: Record<string, string> }[] = [
				{ status: 404 },
				{ headers: { 'set-cookie': 'a=b' } },
				{ headers: { 'cache-control': 'private' } },
				{ headers: { 'cache-control': 'no-store' } },
				{ headers: { 'content-type': 'application/pdf' } }
			];
			for (const init of kinds) {
				const page = renderer(init);
				await serve(event(), page.resolve);
				const second = await serve(event(), page.resolve);
				expect(page.renders(), JSON.stringify(init)).toBe(2);
				expect(second.headers.has('x-tideward-cache')).toBe(false);
			}
			const page = renderer();
			await serve(event(), async () => {
				const response = await page.resolve();
				clearPublicCache(); // a staff edit saved while this page was being rendered
				return response;
			});
			await serve(event(), page.resolve);
			expect(page.renders()).toBe(2);
		}));

	it('renders again after a change and keeps query strings apart', () =>
		withCache(async () => {
			const page = renderer();
			await serve(event(), page.resolve);
			clearPublicCache();
			expect(await (await serve(event(), page.resolve)).text()).toContain('render 2');
			await serve(event({ path: '/patients/perla?x=1' }), page.resolve);
			expect(page.renders()).toBe(3);
		}));

	it('answers a public API from the store, checking If-None-Match itself (RFC 9111 §4.3.2)', () =>
		withCache(async () => {
			const answer = api();
			const route = { route: '/api/patients', path: '/api/patients' };
			// A returning client asks first: the app is asked for the whole answer, the client
			// gets its 304.
			const first = await serve(
				event({ ...route, headers: { 'if-none-match': 'W/"v1"' } }),
				answer.resolve
			);
			expect(first.status).toBe(304);
			expect(first.headers.get('etag')).toBe('"v1"');
			expect(first.headers.get('cache-control')).toBe('public, max-age=60');
			expect(answer.seen).toEqual([null]);
			const second = await serve(
				event({ ...route, headers: { 'if-none-match': '"other", "v1"' } }),
				answer.resolve
			);
			expect(second.status).toBe(304);
			const third = await serve(
				event({ ...route, headers: { 'if-none-match': '"v0"' } }),
				answer.resolve
			);
			expect(third.status).toBe(200);
			expect(await third.text()).toBe(answer.body);
			expect(third.headers.get('etag')).toBe('"v1"');
			expect(answer.seen).toHaveLength(1);
		}));
});

describe('cachePublicAnswers under a crowd', () => {
	it('renders once for visitors who arrive while the first render runs', () =>
		withCache(async () => {
			let renders = 0;
			let finish!: () => void;
			const gate = new Promise<void>((done) => (finish = done));
			const resolve = async () => {
				renders += 1;
				await gate;
				return new Response('<p>page</p>', { headers: { 'content-type': 'text/html' } });
			};
			const crowd = Array.from({ length: 10 }, () =>
				serve(event({ route: '/stories', path: '/stories' }), resolve)
			);
			finish();
			const bodies = await Promise.all(crowd.map(async (r) => (await r).text()));
			expect(renders).toBe(1);
			expect(bodies).toEqual(Array(10).fill('<p>page</p>'));
		}));
});

describe('answerFromCache (the door in front of SvelteKit)', () => {
	let server: Server;
	let port = 0;
	let passedOn = 0;
	beforeAll(async () => {
		server = createServer((req, res) => {
			if (answerFromCache(req, res)) return;
			passedOn += 1;
			res.writeHead(418).end('the app');
		});
		await new Promise<void>((done) => server.listen(0, '127.0.0.1', done));
		port = (server.address() as AddressInfo).port;
	});
	afterAll(() => new Promise<void>((done) => server.close(() => done())));

	function get(path: string, headers: Record<string, string> = {}, method = 'GET') {
		return new Promise<{ status: number; headers: Record<string, string>; body: Buffer }>(
			(done, fail) => {
				const req = httpRequest({ host: '127.0.0.1', port, path, method, headers }, (res) => {
					const chunks: Buffer[] = [];
					res.on('data', (c: Buffer) => chunks.push(c));
					res.on('end', () =>
						done({
							status: res.statusCode ?? 0,
							headers: res.headers as Record<string, string>,
							body: Buffer.concat(chunks)
						})
					);
				});
				req.on('error', fail);
				req.end();
			}
		);
	}

	/** What the app's own hooks answer for the same request (the door must answer the same). */
	async function throughHooks(e: Event, resolve: (e: Event) => Promise<Response>) {
		const response = await chained(e, resolve);
		const body = Buffer.from(await response.arrayBuffer());
		return { status: response.status, headers: Object.fromEntries(response.headers), body };
	}

	const comparable = (headers: Record<string, string>) => {
		const kept = Object.fromEntries(
			Object.entries(headers).filter(
				([name]) =>
					!['date', 'connection', 'keep-alive', 'transfer-encoding', 'content-length'].includes(
						name
					) && name !== 'x-tideward-cache'
			)
		);
		if (kept['content-security-policy']) {
			kept['content-security-policy'] = kept['content-security-policy'].replace(
				/'nonce-[^']+'/,
				'N'
			);
		}
		return kept;
	};

	it('answers a stored page as the hooks would, gzip or not, with a fresh nonce each time', () =>
		withCache(async () => {
			const page = renderer({ size: 2_000 });
			const viaHooks = await throughHooks(
				event({ headers: { 'accept-encoding': 'gzip' } }),
				page.resolve
			);
			const plainViaHooks = await throughHooks(event(), page.resolve);
			expect(page.renders()).toBe(1);
			const zipped = await get('/patients/perla', { 'accept-encoding': 'gzip, deflate, br' });
			const plain = await get('/patients/perla');
			expect(passedOn).toBe(0);
			expect(zipped.headers['x-tideward-cache']).toBe('hit');
			expect(comparable(zipped.headers)).toEqual(comparable(viaHooks.headers));
			expect(comparable(plain.headers)).toEqual(comparable(plainViaHooks.headers));
			expect(zipped.headers['x-frame-options']).toBe('DENY');
			expect(zipped.headers['content-encoding']).toBe('gzip');
			expect(plain.headers['content-encoding']).toBeUndefined();
			expect(Number(zipped.headers['content-length'])).toBe(zipped.body.length);
			expect(Number(plain.headers['content-length'])).toBe(plain.body.length);
			const unzipped = gunzipSync(zipped.body).toString();
			const withoutNonces = (html: string) => html.replaceAll(/nonce="[^"]+"/g, 'nonce');
			expect(withoutNonces(unzipped)).toBe(withoutNonces(gunzipSync(viaHooks.body).toString()));
			expect(withoutNonces(plain.body.toString())).toBe(withoutNonces(unzipped));
			const nonces = [zipped, plain].map((r) => nonceIn(r.headers['content-security-policy'])!);
			expect(unzipped).toContain(`nonce="${nonces[0]}"`);
			expect(plain.body.toString()).toContain(`nonce="${nonces[1]}"`);
			expect(
				new Set([NONCE, ...nonces, nonceIn(viaHooks.headers['content-security-policy'])]).size
			).toBe(4);
		}));

	it('answers 304 for a held ETag, weak or strong, and HEAD without a body', () =>
		withCache(async () => {
			const answer = api();
			await throughHooks(event({ route: '/api/patients', path: '/api/patients' }), answer.resolve);
			const zipped = await get('/api/patients', { 'accept-encoding': 'gzip' });
			expect(zipped.headers.etag).toBe('W/"v1"');
			expect(JSON.parse(gunzipSync(zipped.body).toString())).toEqual(JSON.parse(answer.body));
			for (const held of ['W/"v1"', '"v1"']) {
				const again = await get('/api/patients', {
					'if-none-match': held,
					'accept-encoding': 'gzip'
				});
				expect(again.status).toBe(304);
				expect(again.body.length).toBe(0);
				expect(again.headers['cache-control']).toBe('public, max-age=60');
				expect(again.headers.vary).toBe('Accept-Encoding');
			}
			const head = await get('/api/patients', {}, 'HEAD');
			expect(head.status).toBe(200);
			expect(head.body.length).toBe(0);
			expect(passedOn).toBe(0);
		}));

	it('leaves to the app what it does not hold or may not answer', () =>
		withCache(async () => {
			const page = renderer();
			await throughHooks(event(), page.resolve);
			const before = passedOn;
			await get('/patients/perla', { cookie: 'theme=dark; tideward_session=abc' });
			await get('/patients/perla?x=1');
			await get('/patients/coral');
			await get('/patients/perla', {}, 'POST');
			expect(passedOn - before).toBe(4);
			process.env.ORIGIN = '';
			await get('/patients/perla');
			expect(passedOn - before).toBe(5);
			process.env.ORIGIN = ORIGIN;
			clearPublicCache();
			await get('/patients/perla');
			expect(passedOn - before).toBe(6);
		}));

	it('leaves compression to a proxy when COMPRESS_RESPONSES=off', () =>
		withCache(async () => {
			const page = renderer({ size: 2_000 });
			process.env.COMPRESS_RESPONSES = 'off';
			try {
				const viaHooks = await throughHooks(
					event({ headers: { 'accept-encoding': 'gzip' } }),
					page.resolve
				);
				const copy = await get('/patients/perla', { 'accept-encoding': 'gzip' });
				expect(copy.headers['content-encoding']).toBeUndefined();
				expect(copy.headers.vary).toBeUndefined();
				expect(comparable(copy.headers)).toEqual(comparable(viaHooks.headers));
			} finally {
				delete process.env.COMPRESS_RESPONSES;
			}
		}));
});
