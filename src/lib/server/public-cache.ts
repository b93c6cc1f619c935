import type { Handle } from '@sveltejs/kit';
import { cacheLifetimeMs, forgetPublicAnswers } from './public-answers';

/**
 * A short-lived cache of public reads (microcaching, common practice for busy public pages): the
 * same public data asked for by many visitors within a few seconds is read from the database
 * once. Only data every visitor may see goes in here — never anything that depends on who asks.
 *
 * Freshness: entries live `PUBLIC_CACHE_MS` (default 5 s; 0 turns the cache off). This process
 * forgets everything at once after any change it makes (a successful form post or API write, a
 * scheduled publication, a journey recomputed: see `clearPublicCache` callers), so staff see
 * their own change at once; other instances on the same database see it within the lifetime.
 * Browsers already keep public API answers for 60 s (`PUBLIC_CACHE_CONTROL`).
 */

interface Entry<T> {
	expires: number;
	value: Promise<T>;
}

export class TtlCache {
	readonly #entries = new Map<string, Entry<unknown>>();

	constructor(
		private readonly ttlMs: () => number,
		private readonly maxEntries = 500,
		private readonly now: () => number = Date.now
	) {}

	/**
	 * The cached value for `key`, or `compute()`'s, shared by every caller that asks while it is
	 * being computed. A failed computation is not kept.
	 */
	get<T>(key: string, compute: () => Promise<T>): Promise<T> {
		const ttl = this.ttlMs();
		if (!(ttl > 0)) return compute();
		const now = this.now();
		const hit = this.#entries.get(key);
		if (hit && hit.expires > now) return hit.value as Promise<T>;
		if (hit) this.#entries.delete(key);
		const value = compute();
		const entry: Entry<T> = { expires: now + ttl, value };
		this.#entries.set(key, entry);
		value.catch(() => {
			if (this.#entries.get(key) === entry) this.#entries.delete(key);
		});
		if (this.#entries.size > this.maxEntries) {
			// Oldest first (a Map keeps insertion order).
			const oldest = this.#entries.keys().next().value;
			if (oldest !== undefined) this.#entries.delete(oldest);
		}
		return value;
	}

	clear(): void {
		this.#entries.clear();
	}

	get size(): number {
		return this.#entries.size;
	}
}

const cache = new TtlCache(cacheLifetimeMs);

/** A public read through the shared cache. `key` names the read and all its arguments. */
export function publicRead<T>(key: string, compute: () => Promise<T>): Promise<T> {
	return cache.get(key, compute);
}

/** Forgets every cached public read and answer (call after a change to public data). */
export function clearPublicCache(): void {
	cache.clear();
	forgetPublicAnswers();
}

const READS = new Set(['GET', 'HEAD', 'OPTIONS']);

/**
 * Forgets the cached public reads after every request that may have changed data (any method but
 * GET/HEAD/OPTIONS) and did not fail: staff see their edit on the public pages at once.
 */
export const forgetPublicReadsAfterWrites: Handle = async ({ event, resolve }) => {
	const response = await resolve(event);
	if (!READS.has(event.request.method) && response.status < 400) clearPublicCache();
	return response;
};
