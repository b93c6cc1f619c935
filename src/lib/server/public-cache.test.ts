import { describe, expect, it } from 'vitest';
import {
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
