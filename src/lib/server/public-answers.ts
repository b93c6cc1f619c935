import type { Handle } from '@sveltejs/kit';
import { randomBytes } from 'node:crypto';
import type { IncomingMessage, ServerResponse } from 'node:http';
import { constants, crc32, deflateRawSync, gzipSync } from 'node:zlib';
import { appOrigin } from './config';
import { acceptsGzip, compressible, compressionOn, withAcceptEncoding } from './compression';
import { etagListMatches } from './http';
import { securityHeaderValues } from './security-headers';

/**
 * Whole public answers kept for a few seconds (microcaching, common practice for busy public
 * pages): the pages and public APIs as a signed-out visitor gets them, which is what a shared
 * link opens. Like a shared HTTP cache in front of the app (RFC 9111), the store answers
 * conditional requests itself (§4.3.2) and never holds anything that depends on who asks:
 * a session cookie, a data request, an answer other than a plain 200, one that sets a cookie or
 * is marked private/no-store keeps the request away from it.
 *
 * Two doors lead to the same store:
 * - `cachePublicAnswers`, a SvelteKit handle, fills it and answers from it (dev, preview, tests);
 * - `answerFromCache`, called by `server.js` for each request before SvelteKit, answers hits
 *   straight from the bytes: most of a cached answer's cost was SvelteKit's own pipeline
 *   (Request object, hooks, async context), see BENCHMARKS.md "Public HTTP".
 *
 * Each copy of a page gets a fresh CSP nonce (CSP Level 3 §7.1: a nonce must not repeat), also
 * when it is sent compressed: the page is kept as deflate pieces cut where the nonce stands, and
 * each copy is the pieces with its nonce between them (see `gzipWithNonce`).
 *
 * Lifetime `PUBLIC_CACHE_MS` (default 5 s, 0 turns it off); everything is forgotten at once
 * after any change this process makes (`clearPublicCache` in public-cache.ts).
 */

/** Routes whose answers to signed-out visitors are the same for everyone. */
export const CACHED_ROUTES = new Set([
	'/',
	'/patients',
	'/patients/[slug]',
	'/stories',
	'/stories/[slug]',
	'/stranded',
	'/api/patients',
	'/api/patients/[slug]',
	'/api/patients/[slug]/journey'
]);
export const SESSION_COOKIE = 'tideward_session';
const MAX_ANSWERS = 300;
const STORABLE_TYPE = /^(text\/html|application\/([a-z.+-]*\+)?json)\b/i;

export function cacheLifetimeMs(): number {
	const raw = process.env.PUBLIC_CACHE_MS;
	if (raw === undefined || raw.trim() === '') return 5_000;
	const ms = Number(raw);
	return Number.isFinite(ms) && ms >= 0 ? ms : 5_000;
}

interface StoredAnswer {
	expires: number;
	status: number;
	/** The app's own headers (the ETag of pages dropped: each copy's bytes differ). */
	headers: [string, string][];
	/** Added on the way out, as `securityHeaders` adds them. */
	security: [string, string][];
	etag: string | null;
	/**
	 * The body cut where the CSP nonce it was rendered with stood. Bytes, not a string: a Response
	 * made from a long string checks it character by character (undici's toUSVString).
	 */
	parts: Buffer[];
	nonce: string | null;
	/** Whether `compressResponses` would compress it (text of 1 KB or more…). */
	compressible: boolean;
	/** Compressed once, when first asked for: the whole body, or the pieces between nonces. */
	gzip?: Buffer;
	deflated?: DeflatedPieces;
}

const answers = new Map<string, StoredAnswer>();
const filling = new Map<string, Promise<StoredAnswer | null>>();
let generation = 0;

/** Forgets every stored answer (with the public reads, after any change). */
export function forgetPublicAnswers(): void {
	answers.clear();
	generation += 1;
}

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

const GZIP_HEADER = Buffer.from([0x1f, 0x8b, 8, 0, 0, 0, 0, 0, 0, 0xff]);
/** A final, empty deflate block with fixed Huffman codes (RFC 1951 §3.2.3, §3.2.6). */
const FINAL_EMPTY_BLOCK = Buffer.from([0x03, 0x00]);

/** A stored (uncompressed) deflate block, not final, for up to 65,535 bytes (RFC 1951 §3.2.4). */
function storedBlock(bytes: Buffer): Buffer {
	const head = Buffer.alloc(5);
	head.writeUInt16LE(bytes.length, 1);
	head.writeUInt16LE(~bytes.length & 0xffff, 3);
	return Buffer.concat([head, bytes]);
}

// CRC-32 of joined pieces from the pieces' own CRCs (zlib's crc32_combine, after its
// multmodp/x2nmodp: polynomial arithmetic modulo the CRC-32 polynomial, reflected).
const POLY = 0xedb88320;

function multModP(a: number, b: number): number {
	let m = 1 << 31;
	let p = 0;
	for (;;) {
		if (a & m) {
			p ^= b;
			if ((a & (m - 1)) === 0) break;
		}
		m >>>= 1;
		b = b & 1 ? (b >>> 1) ^ POLY : b >>> 1;
	}
	return p >>> 0;
}

const X2N: number[] = [1 << 30];
for (let k = 1; k < 32; k++) X2N.push(multModP(X2N[k - 1], X2N[k - 1]));

/** x^(n·2^k) modulo the polynomial. */
function x2nModP(n: number, k: number): number {
	let p = 1 << 31;
	for (; n; n = Math.floor(n / 2), k++) if (n % 2) p = multModP(X2N[k & 31], p);
	return p;
}

/** The CRC-32 of A followed by B, from crc(A), crc(B) and B's length. */
export function crc32Combine(crcA: number, crcB: number, lengthB: number): number {
	return (multModP(x2nModP(lengthB, 3), crcA) ^ crcB) >>> 0;
}

/** A page deflated once, in pieces cut where its nonce stands (see `gzipWithNonce`). */
export interface DeflatedPieces {
	deflated: Buffer[];
	lengths: number[];
	crcs: number[];
}

/** Deflates each part on its own, ending on a byte boundary (Z_SYNC_FLUSH, no final block). */
export function deflatePieces(parts: Buffer[]): DeflatedPieces {
	return {
		deflated: parts.map((part) =>
			deflateRawSync(part, { level: 6, finishFlush: constants.Z_SYNC_FLUSH })
		),
		lengths: parts.map((part) => part.length),
		crcs: parts.map((part) => crc32(part))
	};
}

/**
 * A gzip member (RFC 1952) of the parts joined by `nonce`, made without compressing the page
 * again: each part was deflated on its own ending on a byte boundary without a final block, so
 * the pieces can follow one another with the nonce as a stored block between them (RFC 1951
 * §3.2.4), closed by an empty final block; the CRC-32 of the whole comes from the parts' own.
 */
export function gzipWithNonce(pieces: DeflatedPieces, nonce: Buffer): Buffer[] {
	const out: Buffer[] = [GZIP_HEADER];
	const nonceCrc = crc32(nonce);
	let crc = 0;
	let size = 0;
	pieces.deflated.forEach((piece, i) => {
		if (i > 0) {
			out.push(storedBlock(nonce));
			crc = crc32Combine(crc, nonceCrc, nonce.length);
			size += nonce.length;
		}
		out.push(piece);
		crc = i === 0 ? pieces.crcs[0] : crc32Combine(crc, pieces.crcs[i], pieces.lengths[i]);
		size += pieces.lengths[i];
	});
	const trailer = Buffer.alloc(8);
	trailer.writeUInt32LE(crc >>> 0, 0);
	trailer.writeUInt32LE(size % 2 ** 32, 4);
	out.push(FINAL_EMPTY_BLOCK, trailer);
	return out;
}

interface Copy {
	status: number;
	headers: [string, string][];
	body: Buffer[];
}

/**
 * One copy of a stored answer for this request: 304 when the client holds its ETag, else the
 * body with a fresh nonce, gzip-compressed when the client takes it (as `compressResponses` would).
 */
interface Asked {
	head: boolean;
	ifNoneMatch: string | null;
	acceptEncoding: string | null;
	/** Add what the outer handles add (the security headers; compression unless turned off). */
	finish: boolean;
	/** Whether the answer was just made for this request (`x-tideward-cache: miss`). */
	made?: boolean;
}

function copyOf(answer: StoredAnswer, asked: Asked): Copy {
	const headers: [string, string][] = [...answer.headers];
	if (asked.finish) headers.push(...answer.security);
	const compress = asked.finish && answer.compressible && compressionOn();
	const gzip = compress && !asked.head && acceptsGzip(asked.acceptEncoding);
	if (compress) setHeader(headers, 'vary', withAcceptEncoding(getHeader(headers, 'vary')));
	if (answer.etag) {
		// The compressed bytes differ from the ones the strong validator named (RFC 9110 §8.8.1).
		const etag = gzip && !answer.etag.startsWith('W/') ? `W/${answer.etag}` : answer.etag;
		setHeader(headers, 'etag', etag);
		if (etagListMatches(asked.ifNoneMatch, etag)) {
			// RFC 9110 §15.4.5: a 304 repeats the 200's ETag, Cache-Control and Vary.
			const kept = headers.filter(([n]) => n !== 'content-type' && n !== 'content-length');
			return { status: 304, headers: kept, body: [] };
		}
	}
	let nonce: Buffer | null = null;
	if (answer.nonce) {
		const fresh = randomBytes(16).toString('base64');
		nonce = Buffer.from(fresh);
		const policy = getHeader(headers, 'content-security-policy');
		if (policy)
			setHeader(headers, 'content-security-policy', policy.replaceAll(answer.nonce, fresh));
	}
	let body: Buffer[];
	if (gzip) {
		setHeader(headers, 'content-encoding', 'gzip');
		if (nonce) {
			answer.deflated ??= deflatePieces(answer.parts);
			body = gzipWithNonce(answer.deflated, nonce);
		} else {
			answer.gzip ??= gzipSync(Buffer.concat(answer.parts));
			body = [answer.gzip];
		}
	} else {
		body = nonce
			? answer.parts.flatMap((part, i) => (i === 0 ? [part] : [nonce, part]))
			: answer.parts;
	}
	setHeader(headers, 'content-length', String(body.reduce((n, b) => n + b.length, 0)));
	setHeader(headers, 'x-tideward-cache', asked.made ? 'miss' : 'hit');
	return { status: answer.status, headers, body };
}

function getHeader(headers: [string, string][], name: string): string | null {
	return headers.find(([n]) => n === name)?.[1] ?? null;
}

function setHeader(headers: [string, string][], name: string, value: string): void {
	const at = headers.findIndex(([n]) => n === name);
	if (at === -1) headers.push([name, value]);
	else headers[at] = [name, value];
}

function hasSessionCookie(cookie: string | null | undefined): boolean {
	return !!cookie && cookie.split(';').some((c) => c.trim().startsWith(`${SESSION_COOKIE}=`));
}

function toResponse(copy: Copy): Response {
	const body = copy.status === 304 ? null : Buffer.concat(copy.body);
	return new Response(body as Uint8Array<ArrayBuffer> | null, {
		status: copy.status,
		headers: new Headers(copy.headers)
	});
}

/** Whether an answer may be kept for everyone: a plain 200 page or JSON, nothing personal. */
function storable(response: Response): boolean {
	const type = response.headers.get('content-type') ?? '';
	const cacheControl = response.headers.get('cache-control') ?? '';
	return (
		response.status === 200 &&
		STORABLE_TYPE.test(type) &&
		!response.headers.has('set-cookie') &&
		!response.headers.has('content-encoding') &&
		!/\b(no-store|private)\b/i.test(cacheControl)
	);
}

async function store(response: Response): Promise<StoredAnswer> {
	const type = response.headers.get('content-type') ?? '';
	const bytes = Buffer.from(await response.arrayBuffer());
	const page = type.startsWith('text/html');
	const headers = [...response.headers].filter(
		([name]) => name !== 'content-length' && !(page && name === 'etag')
	);
	const nonce = page ? nonceOf(response.headers.get('content-security-policy')) : null;
	return {
		expires: Date.now() + cacheLifetimeMs(),
		status: 200,
		headers,
		security: Object.entries(securityHeaderValues(appOrigin(), new Headers(headers))),
		etag: page ? null : response.headers.get('etag'),
		parts: nonce ? splitBytes(bytes, Buffer.from(nonce)) : [bytes],
		nonce,
		compressible: compressible(200, new Headers(headers), bytes.length)
	};
}

function keep(key: string, answer: StoredAnswer): void {
	answers.set(key, answer);
	if (answers.size > MAX_ANSWERS) {
		const oldest = answers.keys().next().value;
		if (oldest !== undefined) answers.delete(oldest);
	}
}

function fresh(key: string): StoredAnswer | undefined {
	const hit = answers.get(key);
	if (hit && hit.expires > Date.now()) return hit;
	if (hit) answers.delete(key);
	return undefined;
}

/**
 * The SvelteKit door: fills the store and answers from it. Sits inside `securityHeaders` and
 * `compressResponses`, which finish its answers like any other.
 */
export const cachePublicAnswers: Handle = async ({ event, resolve }) => {
	if (
		!(cacheLifetimeMs() > 0) ||
		event.request.method !== 'GET' ||
		event.isDataRequest ||
		!CACHED_ROUTES.has(event.route.id ?? '') ||
		event.cookies.get(SESSION_COOKIE) !== undefined
	) {
		return resolve(event);
	}
	const key = event.url.href;
	const asked: Asked = {
		head: false,
		ifNoneMatch: event.request.headers.get('if-none-match'),
		acceptEncoding: null,
		finish: false
	};
	const hit = fresh(key);
	if (hit) return toResponse(copyOf(hit, asked));
	// Visitors who ask while the answer is being made wait for it (no stampede).
	const pending = filling.get(key);
	if (pending) {
		const answer = await pending;
		if (answer) return toResponse(copyOf(answer, asked));
		return resolve(event);
	}

	let settle!: (answer: StoredAnswer | null) => void;
	filling.set(key, new Promise<StoredAnswer | null>((done) => (settle = done)));
	let answer: StoredAnswer | null = null;
	try {
		const before = generation;
		// The whole answer is what gets stored; the condition is then checked against it.
		if (asked.ifNoneMatch) event.request.headers.delete('if-none-match');
		const response = await resolve(event);
		if (!storable(response)) return response;
		const made = await store(response);
		// An answer made while a change was being saved is not kept (nor shared).
		if (before === generation) {
			answer = made;
			keep(key, answer);
		}
		return toResponse(copyOf(made, { ...asked, made: true }));
	} finally {
		filling.delete(key);
		settle(answer);
	}
};

/**
 * The door in front of SvelteKit (`server.js`): answers a signed-out GET or HEAD from the store
 * and returns true, or returns false and leaves the request to the app. Only with ORIGIN set,
 * so that the address asked for is the address the answer was stored under.
 */
export function answerFromCache(req: IncomingMessage, res: ServerResponse): boolean {
	if (req.method !== 'GET' && req.method !== 'HEAD') return false;
	const origin = process.env.ORIGIN;
	if (!origin || !(cacheLifetimeMs() > 0) || !req.url?.startsWith('/')) return false;
	if (hasSessionCookie(req.headers.cookie)) return false;
	const answer = fresh(origin.replace(/\/$/, '') + req.url);
	if (!answer) return false;
	const acceptEncoding = req.headers['accept-encoding'];
	const ifNoneMatch = req.headers['if-none-match'];
	const copy = copyOf(answer, {
		head: req.method === 'HEAD',
		ifNoneMatch: typeof ifNoneMatch === 'string' ? ifNoneMatch : null,
		acceptEncoding: typeof acceptEncoding === 'string' ? acceptEncoding : null,
		finish: true
	});
	res.writeHead(copy.status, copy.headers.flat());
	if (req.method === 'HEAD' || copy.status === 304) {
		res.end();
		return true;
	}
	res.cork();
	for (const piece of copy.body) res.write(piece);
	res.end();
	res.uncork();
	return true;
}

// server.js, outside the app's bundle, finds the door here once the app has started.
(globalThis as Record<symbol, unknown>)[Symbol.for('tideward.answerFromCache')] = answerFromCache;
