import type { Handle } from '@sveltejs/kit';
import { randomBytes } from 'node:crypto';

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

function ttlFromEnv(): number {
	const raw = process.env.PUBLIC_CACHE_MS;
	if (raw === undefined || raw.trim() === '') return 5_000;
	const ms = Number(raw);
	return Number.isFinite(ms) && ms >= 0 ? ms : 5_000;
}

const cache = new TtlCache(ttlFromEnv);

/** A public read through the shared cache. `key` names the read and all its arguments. */
export function publicRead<T>(key: string, compute: () => Promise<T>): Promise<T> {
	return cache.get(key, compute);
}

/** Forgets every cached public read and page (call after a change to public data). */
export function clearPublicCache(): void {
	cache.clear();
	pages.clear();
	pageGeneration += 1;
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

/**
 * Public pages as a signed-out visitor sees them (what a shared link opens). Anything that can
 * differ between visitors keeps them out: a session cookie, a query answered with an error, a
 * response that sets a cookie or is not a plain 200 page.
 */
export const CACHED_PAGE_ROUTES = new Set([
	'/',
	'/patients',
	'/patients/[slug]',
	'/stories',
	'/stories/[slug]',
	'/stranded'
]);
const SESSION_COOKIE = 'tideward_session';
const MAX_PAGES = 300;

interface CachedPage {
	expires: number;
	status: number;
	headers: [string, string][];
	/**
	 * The page's bytes cut where the CSP nonce it was rendered with stood: every copy sent gets a
	 * fresh nonce in those places. Bytes, not a string: a Response made from a long string checks
	 * it character by character (undici's toUSVString), which costs more than the whole copy.
	 */
	parts: Buffer[];
	nonce: string | null;
}

const pages = new Map<string, CachedPage>();
const rendering = new Map<string, Promise<CachedPage | null>>();
let pageGeneration = 0;

function splitBytes(bytes: Buffer, separator: Buffer): Buffer[] {
	const parts: Buffer[] = [];
	let from = 0;
	for (let at = bytes.indexOf(separator); at !== -1; at = bytes.indexOf(separator, from)) {
		parts.push(bytes.subarray(from, at));
		from = at + separator.length;
	}
	parts.push(bytes.subarray(from));
	return parts;
}

function nonceOf(policy: string | null): string | null {
	return policy ? (/'nonce-([^']+)'/.exec(policy)?.[1] ?? null) : null;
}

function sendCopy(page: CachedPage): Response {
	const headers = new Headers(page.headers);
	let body = page.parts[0];
	if (page.nonce) {
		// A nonce is only worth anything when no two responses share it (CSP Level 3 §7.1).
		const nonce = randomBytes(16).toString('base64');
		const fresh = Buffer.from(nonce);
		body = Buffer.concat(page.parts.flatMap((part, i) => (i === 0 ? [part] : [fresh, part])));
		const policy = headers.get('content-security-policy');
		if (policy) headers.set('content-security-policy', policy.replaceAll(page.nonce, nonce));
	}
	headers.set('content-length', String(body.byteLength));
	headers.set('x-tideward-cache', 'hit');
	return new Response(body as Uint8Array<ArrayBuffer>, { status: page.status, headers });
}

/**
 * Serves the public pages of signed-out visitors from a copy rendered at most `PUBLIC_CACHE_MS`
 * ago (microcaching), with a fresh CSP nonce in every copy. Forgotten with the public reads.
 */
export const cacheAnonymousPages: Handle = async ({ event, resolve }) => {
	const ttl = ttlFromEnv();
	if (
		!(ttl > 0) ||
		event.request.method !== 'GET' ||
		event.isDataRequest ||
		!CACHED_PAGE_ROUTES.has(event.route.id ?? '') ||
		event.cookies.get(SESSION_COOKIE) !== undefined
	) {
		return resolve(event);
	}
	const key = event.url.pathname + event.url.search;
	const hit = pages.get(key);
	if (hit && hit.expires > Date.now()) return sendCopy(hit);
	if (hit) pages.delete(key);
	// Visitors who ask while the page is being rendered wait for that render (no stampede).
	const pending = rendering.get(key);
	if (pending) {
		const page = await pending;
		if (page) return sendCopy(page);
		return resolve(event);
	}

	let settle!: (page: CachedPage | null) => void;
	rendering.set(key, new Promise<CachedPage | null>((done) => (settle = done)));
	let page: CachedPage | null = null;
	try {
		const generation = pageGeneration;
		const response = await resolve(event);
		const type = response.headers.get('content-type') ?? '';
		if (
			response.status !== 200 ||
			!type.startsWith('text/html') ||
			response.headers.has('set-cookie')
		) {
			return response;
		}
		const html = Buffer.from(await response.arrayBuffer());
		const headers = [...response.headers].filter(([name]) => name !== 'etag');
		const nonce = nonceOf(response.headers.get('content-security-policy'));
		const rendered: CachedPage = {
			expires: Date.now() + ttl,
			status: response.status,
			headers,
			parts: nonce ? splitBytes(html, Buffer.from(nonce)) : [html],
			nonce
		};
		// A page rendered while a change was being saved is not kept (nor shared).
		if (generation === pageGeneration) {
			page = rendered;
			pages.set(key, page);
			if (pages.size > MAX_PAGES) {
				const oldest = pages.keys().next().value;
				if (oldest !== undefined) pages.delete(oldest);
			}
		}
		return new Response(html as Uint8Array<ArrayBuffer>, {
			status: response.status,
			headers: new Headers(headers)
		});
	} finally {
		rendering.delete(key);
		settle(page);
	}
};
