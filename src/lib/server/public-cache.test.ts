import { describe, expect, it } from 'vitest';
import {
	cacheAnonymousPages,
	clearPublicCache,
	forgetPublicReadsAfterWrites,
	publicRead,
	TtlCache
} from './public-cache';

function clock(start = 1_000) {
	let now = start;
	return { now: () => now, advance: (ms: number) => (now += ms) };
}

describe('TtlCache', () => {
	it('reads once within the lifetime and again after it', async () => {
		const time = clock();
		const cache = new TtlCache(() => 5_000, 10, time.now);
		let reads = 0;
		const read = () => cache.get('k', async () => ++reads);
		expect(await read()).toBe(1);
		time.advance(4_999);
		expect(await read()).toBe(1);
		time.advance(1);
		expect(await read()).toBe(2);
	});

	it('shares one read between callers that ask while it runs', async () => {
		const cache = new TtlCache(() => 5_000);
		let reads = 0;
		let finish!: (n: number) => void;
		const compute = () => {
			reads++;
			return new Promise<number>((resolve) => (finish = resolve));
		};
		const first = cache.get('k', compute);
		const second = cache.get('k', compute);
		finish(7);
		expect(await Promise.all([first, second])).toEqual([7, 7]);
		expect(reads).toBe(1);
	});

	it('keeps each key apart and forgets everything on clear', async () => {
		const cache = new TtlCache(() => 5_000);
		let reads = 0;
		expect(await cache.get('a', async () => `a${++reads}`)).toBe('a1');
		expect(await cache.get('b', async () => `b${++reads}`)).toBe('b2');
		expect(await cache.get('a', async () => `a${++reads}`)).toBe('a1');
		cache.clear();
		expect(cache.size).toBe(0);
		expect(await cache.get('a', async () => `a${++reads}`)).toBe('a3');
	});

	it('does not keep a failed read', async () => {
		const cache = new TtlCache(() => 5_000);
		await expect(cache.get('k', async () => Promise.reject(new Error('down')))).rejects.toThrow(
			'down'
		);
		expect(await cache.get('k', async () => 'up')).toBe('up');
	});

	it('reads every time when the lifetime is 0 (turned off)', async () => {
		const cache = new TtlCache(() => 0);
		let reads = 0;
		await cache.get('k', async () => ++reads);
		await cache.get('k', async () => ++reads);
		expect(reads).toBe(2);
		expect(cache.size).toBe(0);
	});

	it('holds at most maxEntries, dropping the oldest', async () => {
		const cache = new TtlCache(() => 5_000, 2);
		let reads = 0;
		await cache.get('a', async () => ++reads);
		await cache.get('b', async () => ++reads);
		await cache.get('c', async () => ++reads);
		expect(cache.size).toBe(2);
		expect(await cache.get('a', async () => ++reads)).toBe(4);
	});
});

describe('forgetPublicReadsAfterWrites', () => {
	async function afterRequest(method: string, status: number): Promise<number> {
		const previous = process.env.PUBLIC_CACHE_MS;
		process.env.PUBLIC_CACHE_MS = '60000';
		try {
			let reads = 0;
			const read = () => publicRead('hook-test', async () => ++reads);
			await read();
			await forgetPublicReadsAfterWrites({
				event: { request: new Request('http://localhost/x', { method }) },
				resolve: async () => new Response(null, { status })
			} as never);
			return await read();
		} finally {
			process.env.PUBLIC_CACHE_MS = previous;
			clearPublicCache();
		}
	}

	it('forgets cached reads after a successful write, not after a read or a refused write', async () => {
		expect(await afterRequest('POST', 303)).toBe(2);
		expect(await afterRequest('DELETE', 204)).toBe(2);
		expect(await afterRequest('GET', 200)).toBe(1);
		expect(await afterRequest('POST', 400)).toBe(1);
	});
});

describe('cacheAnonymousPages', () => {
	const NONCE = 'cmVuZGVyZWQtbm9uY2U=';

	function pageEvent(
		options: {
			route?: string;
			method?: string;
			cookie?: string;
			data?: boolean;
			path?: string;
		} = {}
	) {
		const url = new URL(`http://localhost${options.path ?? '/patients/perla'}`);
		return {
			request: new Request(url, { method: options.method ?? 'GET' }),
			url,
			route: { id: options.route ?? '/patients/[slug]' },
			isDataRequest: options.data ?? false,
			cookies: {
				get: (name: string) => (name === 'tideward_session' ? options.cookie : undefined)
			}
		};
	}

	function renderer(init: { status?: number; headers?: Record<string, string> } = {}) {
		let renders = 0;
		const resolve = async () => {
			renders += 1;
			return new Response(
				`<html><script nonce="${NONCE}">start()</script><p>render ${renders}</p></html>`,
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

	async function withCache<T>(run: () => Promise<T>): Promise<T> {
		const previous = process.env.PUBLIC_CACHE_MS;
		process.env.PUBLIC_CACHE_MS = '60000';
		clearPublicCache();
		try {
			return await run();
		} finally {
			process.env.PUBLIC_CACHE_MS = previous;
			clearPublicCache();
		}
	}

	const serve = (event: ReturnType<typeof pageEvent>, resolve: () => Promise<Response>) =>
		cacheAnonymousPages({ event, resolve } as never) as Promise<Response>;

	it('renders a public page once for signed-out visitors, each copy with its own nonce', () =>
		withCache(async () => {
			const page = renderer();
			const first = await serve(pageEvent(), page.resolve);
			const second = await serve(pageEvent(), page.resolve);
			const third = await serve(pageEvent(), page.resolve);
			expect(page.renders()).toBe(1);
			const bodies = await Promise.all([first.text(), second.text(), third.text()]);
			expect(bodies.every((body) => body.includes('render 1'))).toBe(true);
			const nonces = [second, third].map((response, i) => {
				const nonce = /'nonce-([^']+)'/.exec(response.headers.get('content-security-policy')!)![1];
				expect(bodies[i + 1]).toContain(`nonce="${nonce}"`);
				return nonce;
			});
			expect(new Set([NONCE, ...nonces]).size).toBe(3);
			expect(second.headers.get('x-tideward-cache')).toBe('hit');
			expect(second.headers.has('etag')).toBe(false);
		}));

	it('renders every time for a signed-in visitor, a data request, a write or another route', () =>
		withCache(async () => {
			for (const event of [
				pageEvent({ cookie: 'abc' }),
				pageEvent({ data: true }),
				pageEvent({ method: 'POST' }),
				pageEvent({ route: '/account', path: '/account' }),
				pageEvent({ route: '/staff', path: '/staff' })
			]) {
				const page = renderer();
				await serve(event, page.resolve);
				await serve(event, page.resolve);
				expect(page.renders(), `${event.request.method} ${event.route.id}`).toBe(2);
			}
		}));

	it('keeps no copy of an error, a page that sets a cookie, or one rendered during a change', () =>
		withCache(async () => {
			for (const init of [{ status: 404 }, { headers: { 'set-cookie': 'a=b' } }]) {
				const page = renderer(init);
				await serve(pageEvent(), page.resolve);
				await serve(pageEvent(), page.resolve);
				expect(page.renders()).toBe(2);
			}
			const page = renderer();
			await serve(pageEvent(), async () => {
				const response = await page.resolve();
				clearPublicCache(); // a staff edit saved while this page was being rendered
				return response;
			});
			await serve(pageEvent(), page.resolve);
			expect(page.renders()).toBe(2);
		}));

	it('renders again after a change and keeps query strings apart', () =>
		withCache(async () => {
			const page = renderer();
			await serve(pageEvent(), page.resolve);
			clearPublicCache();
			expect(await (await serve(pageEvent(), page.resolve)).text()).toContain('render 2');
			await serve(pageEvent({ path: '/patients/perla?x=1' }), page.resolve);
			expect(page.renders()).toBe(3);
		}));
});

describe('cacheAnonymousPages under a crowd', () => {
	it('renders once for visitors who arrive while the first render runs', async () => {
		const previous = process.env.PUBLIC_CACHE_MS;
		process.env.PUBLIC_CACHE_MS = '60000';
		clearPublicCache();
		try {
			let renders = 0;
			let finish!: () => void;
			const gate = new Promise<void>((done) => (finish = done));
			const resolve = async () => {
				renders += 1;
				await gate;
				return new Response('<p>page</p>', { headers: { 'content-type': 'text/html' } });
			};
			const event = () => {
				const url = new URL('http://localhost/stories');
				return {
					request: new Request(url),
					url,
					route: { id: '/stories' },
					isDataRequest: false,
					cookies: { get: () => undefined }
				};
			};
			const crowd = Array.from(
				{ length: 10 },
				() => cacheAnonymousPages({ event: event(), resolve } as never) as Promise<Response>
			);
			finish();
			const bodies = await Promise.all(crowd.map(async (r) => (await r).text()));
			expect(renders).toBe(1);
			expect(bodies).toEqual(Array(10).fill('<p>page</p>'));
		} finally {
			process.env.PUBLIC_CACHE_MS = previous;
			clearPublicCache();
		}
	});
});
