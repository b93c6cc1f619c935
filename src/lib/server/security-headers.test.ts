import { afterEach, describe, expect, it } from 'vitest';
import { sessionCookieSecure } from './auth/lucia';
import {
	HSTS,
	httpsOrigin,
	securityHeaders,
	securityHeaderValues,
	strictTransportSecurity
} from './security-headers';

const LOCAL_ORIGINS = [
	'http://localhost:3000',
	'https://localhost',
	'https://localhost:5173',
	'https://127.0.0.1',
	'https://127.0.0.1:3000',
	'https://[::1]:3000',
	'https://tideward.localhost'
];

const savedOrigin = process.env.ORIGIN;
afterEach(() => {
	if (savedOrigin === undefined) delete process.env.ORIGIN;
	else process.env.ORIGIN = savedOrigin;
});

describe('strictTransportSecurity', () => {
	it('is sent for a public https origin, for two years with subdomains', () => {
		expect(strictTransportSecurity('https://adopt.example.org')).toBe(
			'max-age=63072000; includeSubDomains'
		);
		// RFC 6797 §6.1.1: max-age is in seconds; 63072000 s = 2 × 365 days.
		expect(HSTS).toContain(`max-age=${2 * 365 * 24 * 60 * 60}`);
		expect(strictTransportSecurity('https://adopt.example.org:8443/')).toBe(HSTS);
	});

	it('is never sent over plain http, nor for a loopback host', () => {
		expect(strictTransportSecurity('http://adopt.example.org')).toBeNull();
		for (const origin of LOCAL_ORIGINS) expect(strictTransportSecurity(origin)).toBeNull();
	});

	it('follows ORIGIN when no origin is given', () => {
		process.env.ORIGIN = 'https://adopt.example.org';
		expect(strictTransportSecurity()).toBe(HSTS);
		process.env.ORIGIN = 'http://localhost:3000';
		expect(strictTransportSecurity()).toBeNull();
	});
});

describe('the session cookie', () => {
	it('is Secure exactly when the origin is https', () => {
		expect(sessionCookieSecure('https://adopt.example.org')).toBe(true);
		expect(sessionCookieSecure('https://localhost')).toBe(true);
		expect(sessionCookieSecure('https://127.0.0.1:3000')).toBe(true);
		expect(sessionCookieSecure('http://localhost:3000')).toBe(false);
		expect(sessionCookieSecure('http://127.0.0.1:3000')).toBe(false);
		// Over plain http a browser refuses to store a Secure cookie (RFC 6265bis, Storage Model).
		expect(sessionCookieSecure('http://adopt.example.org')).toBe(false);
		expect(httpsOrigin('https://adopt.example.org')).toBe(true);
	});
});

describe('securityHeaders', () => {
	async function respond(origin: string, response: Response): Promise<Headers> {
		process.env.ORIGIN = origin;
		const url = new URL('/patients', origin);
		const result = await securityHeaders({
			event: { url, request: new Request(url) } as never,
			resolve: async () => response
		});
		return result.headers;
	}

	it('adds the fixed headers, and HSTS on a public https origin only', async () => {
		const pdf = () => new Response('%PDF-', { headers: { 'content-type': 'application/pdf' } });
		const secure = await respond('https://adopt.example.org', pdf());
		expect(Object.fromEntries(secure)).toEqual({
			'content-type': 'application/pdf',
			'x-content-type-options': 'nosniff',
			'referrer-policy': 'strict-origin-when-cross-origin',
			'x-frame-options': 'DENY',
			'strict-transport-security': 'max-age=63072000; includeSubDomains',
			'content-security-policy': "frame-ancestors 'none'"
		});
		for (const origin of ['http://localhost:3000', 'https://localhost', 'https://127.0.0.1']) {
			const local = await respond(origin, pdf());
			expect(local.has('strict-transport-security')).toBe(false);
			expect(local.get('x-frame-options')).toBe('DENY');
		}
	});

	it('keeps the policy SvelteKit wrote for a page', async () => {
		const policy = "default-src 'self'; script-src 'self' 'nonce-abc'; frame-ancestors 'none'";
		const headers = await respond(
			'https://adopt.example.org',
			new Response('<!doctype html>', { headers: { 'content-security-policy': policy } })
		);
		expect(headers.get('content-security-policy')).toBe(policy);
	});

	it('gives other responses no policy beyond framing (a wider one breaks PDF viewers)', () => {
		const values = securityHeaderValues('http://localhost:3000', new Headers());
		expect(values['content-security-policy']).toBe("frame-ancestors 'none'");
		expect(values).not.toHaveProperty('strict-transport-security');
	});
});
