// Hostile requests over real HTTP against the built server (no browser): bodies over the size
// limits, garbage to the webhook and the public APIs, NUL bytes and overlong addresses, a forged
// session cookie, markup in query strings; the server answers each with a 4xx and still answers
// /healthz afterwards. The integration suite (tests/integration/hostile/) covers the same
// surfaces case by case; this file checks what only the running server does (adapter-node's
// BODY_SIZE_LIMIT, Node's HTTP parser, the hooks).
import { beforeAll, describe, expect, it } from 'vitest';
import { DEMO_PASSWORD } from '$lib/server/db/seed/demo';
import { baseURL, demoUser } from './browser';

const MB = 1024 * 1024;
/** The e2e server's BODY_SIZE_LIMIT (tests/e2e/global-setup.ts). */
const BODY_SIZE_LIMIT = 64 * MB;

let tracker = '';
let educator = '';
let slug = '';

/** Signs in with the demo password over HTTP and returns the session cookie. */
async function signIn(email: string): Promise<string> {
	const response = await fetch(`${baseURL()}/signin?/password`, {
		method: 'POST',
		headers: { 'content-type': 'application/x-www-form-urlencoded', origin: baseURL() },
		body: new URLSearchParams({ email, password: DEMO_PASSWORD }),
		redirect: 'manual'
	});
	// a form action posted without Accept: text/html answers with JSON (the redirect inside)
	expect(response.status).toBeLessThan(400);
	const cookie = response.headers.getSetCookie().find((c) => c.startsWith('tideward_session='));
	expect(cookie).toBeDefined();
	return cookie!.split(';')[0];
}

/** A body of `size` bytes of `fill`, sent in chunks (no Content-Length: chunked encoding). */
function chunked(size: number, fill = ' '): ReadableStream<Uint8Array> {
	const chunk = new TextEncoder().encode(fill.repeat(MB));
	let sent = 0;
	return new ReadableStream({
		pull(controller) {
			if (sent >= size) return controller.close();
			controller.enqueue(chunk);
			sent += chunk.length;
		}
	});
}

async function status(path: string, init: RequestInit = {}): Promise<number> {
	const response = await fetch(`${baseURL()}${path}`, { redirect: 'manual', ...init });
	await response.arrayBuffer();
	return response.status;
}

beforeAll(async () => {
	tracker = await signIn(demoUser('tracker').email);
	educator = await signIn(demoUser('educator').email);
	const { patients } = await (await fetch(`${baseURL()}/api/patients`)).json();
	slug = patients[0].slug;
});

describe('bodies over the size limits', () => {
	it('a declared photo over the limit: 413 before the body is read', async () => {
		const response = await fetch(`${baseURL()}/staff/newsroom/media`, {
			method: 'POST',
			headers: {
				cookie: educator,
				origin: baseURL(),
				'content-type': 'multipart/form-data; boundary=x'
			},
			body: new Uint8Array(BODY_SIZE_LIMIT + MB)
		});
		expect(response.status).toBe(413);
		expect((await response.json()).error).toMatch(/at most 15 MB/);
	});

	it('a chunked photo upload over BODY_SIZE_LIMIT: 413', async () => {
		const response = await fetch(`${baseURL()}/staff/newsroom/media`, {
			method: 'POST',
			headers: {
				cookie: educator,
				origin: baseURL(),
				'content-type': 'multipart/form-data; boundary=x'
			},
			body: chunked(BODY_SIZE_LIMIT + 2 * MB),
			duplex: 'half'
		} as RequestInit);
		expect(response.status).toBe(413);
	});

	it('a position file over the server’s BODY_SIZE_LIMIT, with a Content-Length: 413', async () => {
		const response = await fetch(
			`${baseURL()}/staff/tracking/${slug}/import?format=gpx&policy=refuse_file&fileName=a.gpx&transmitterId=TX-1`,
			{
				method: 'POST',
				headers: { cookie: tracker, origin: baseURL() },
				body: new Uint8Array(BODY_SIZE_LIMIT + MB)
			}
		);
		expect(response.status).toBe(413);
		expect((await response.json()).error).toMatch(/at most 64 MB/);
	});

	it('a chunked position file over BODY_SIZE_LIMIT (no Content-Length): 413', async () => {
		const response = await fetch(
			`${baseURL()}/staff/tracking/${slug}/import?format=gpx&policy=refuse_file&fileName=a.gpx&transmitterId=TX-1`,
			{
				method: 'POST',
				// without a Content-Type SvelteKit reads no body at all
				headers: { cookie: tracker, origin: baseURL(), 'content-type': 'application/gpx+xml' },
				body: chunked(BODY_SIZE_LIMIT + 2 * MB),
				duplex: 'half'
			} as RequestInit
		);
		expect(response.status).toBe(413);
		expect((await response.json()).error).toMatch(/at most 64 MB/);
	});
});

describe('garbage to the webhook and the public APIs', () => {
	const post = (path: string, body: BodyInit, headers: Record<string, string> = {}) =>
		status(path, { method: 'POST', body, headers });
	// as the processor sends them: JSON, no Origin
	const json = { 'content-type': 'application/json' };
	it('the webhook refuses unsigned and garbled bodies', async () => {
		expect(await post('/api/webhooks/stripe', '{"id":', json)).toBe(400);
		const garbage = new Uint8Array([0, 255, 1]);
		expect(
			await post('/api/webhooks/stripe', garbage, { ...json, 'stripe-signature': 't=1,v1=00' })
		).toBe(400);
		const big = 'x'.repeat(5 * MB);
		expect(
			await post('/api/webhooks/stripe', big, { ...json, 'stripe-signature': 'garbage' })
		).toBe(400);
		// a form-encoded post from nowhere is refused by the same-origin check first
		expect(await post('/api/webhooks/stripe', 'a=1', { 'content-type': 'text/plain' })).toBe(403);
	});
	it('the public APIs refuse bad query values', async () => {
		expect(await status('/api/patients?species=%3Cscript%3E')).toBe(400);
		expect(await status('/api/patients?q=' + 'a'.repeat(200))).toBe(400);
		expect(await status('/api/stories?limit=1e309')).toBe(400);
		expect(await status('/api/stories?before=not-a-date')).toBe(400);
		expect(await status('/api/patients/no-such-patient')).toBe(404);
		expect(await status('/api/adoptions/session/..%2F..%2Fetc%2Fpasswd')).toBe(404);
	});
	it('the one-click unsubscribe refuses a forged token', async () => {
		expect(
			await post('/api/unsubscribe/eyJ4Ijoi.AAAA', 'List-Unsubscribe=One-Click', {
				'content-type': 'application/x-www-form-urlencoded'
			})
		).toBe(400);
	});
	it('the markdown preview refuses a body that is not JSON', async () => {
		expect(
			await post('/staff/newsroom/preview', '{"markdown":', {
				cookie: educator,
				origin: baseURL(),
				'content-type': 'application/json'
			})
		).toBe(400);
	});
});

describe('unreadable addresses and cookies', () => {
	it('a NUL byte in a path parameter or a query value: 400', async () => {
		for (const path of [
			'/patients/%00',
			'/api/patients/abc%00def',
			'/stories/%00',
			'/api/patients?q=%00',
			'/preferences/%00',
			'/media/abc%00/960.webp'
		]) {
			expect(await status(path), path).toBe(400);
		}
	});
	it('an overlong address: 414 from the app, or 431 from Node’s HTTP parser', async () => {
		expect(await status(`/patients/${'a'.repeat(10_000)}`)).toBe(414);
		expect(await status(`/api/patients?q=${'a'.repeat(10_000)}`)).toBe(414);
		expect([414, 431]).toContain(await status(`/patients/${'a'.repeat(100_000)}`));
	});
	it('malformed percent-encoding is a 4xx', async () => {
		const answer = await status('/patients/%E0%A4%A');
		expect(answer).toBeGreaterThanOrEqual(400);
		expect(answer).toBeLessThan(500);
	});
	it('a forged session cookie is ignored, a NUL in it included', async () => {
		for (const value of ['%00', 'not-a-session', 'a'.repeat(4000), '%F0%9F%90%A2']) {
			expect(await status('/', { headers: { cookie: `tideward_session=${value}` } }), value).toBe(
				200
			);
		}
	});
	it('markup in a query string comes back as text, never as markup', async () => {
		const payload = '"><script>alert(1)</script><img src=x onerror=alert(2)>';
		for (const path of ['/patients?q=', '/stories?kind=', '/signin?redirectTo=']) {
			const response = await fetch(`${baseURL()}${path}${encodeURIComponent(payload)}`);
			expect(response.status, path).toBe(200);
			const html = await response.text();
			expect(html.includes(payload), path).toBe(false);
			expect(html, path).not.toMatch(/<img src=x onerror/i);
		}
	});
});

describe('after the batch', () => {
	it('/healthz still answers 200', async () => {
		const response = await fetch(`${baseURL()}/healthz`);
		expect(response.status).toBe(200);
		expect(await response.json()).toMatchObject({ status: 'ok', database: { state: 'up' } });
	});
});
