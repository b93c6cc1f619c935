import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { ifNoneMatchMatches, jsonWithEtag, strongEtag, withEtag } from './http';

const request = (ifNoneMatch?: string) =>
	new Request('http://localhost/api/x', {
		headers: ifNoneMatch ? { 'if-none-match': ifNoneMatch } : {}
	});

describe('strongEtag', () => {
	it('is the quoted SHA-256 of the exact bytes (a strong validator, RFC 9110 §8.8.3)', () => {
		const body = '{"a":1}';
		const digest = createHash('sha256').update(body).digest('base64url');
		expect(strongEtag(body)).toBe(`"${digest}"`);
		expect(strongEtag('{"a":2}')).not.toBe(strongEtag(body));
		expect(strongEtag(body)).not.toMatch(/^W\//);
	});
});

describe('ifNoneMatchMatches (RFC 9110 §13.1.2, weak comparison)', () => {
	const tag = '"abc"';
	it('matches the tag itself, one of a list, its weak form and *', () => {
		expect(ifNoneMatchMatches(request('"abc"'), tag)).toBe(true);
		expect(ifNoneMatchMatches(request('"x", "abc" ,"y"'), tag)).toBe(true);
		expect(ifNoneMatchMatches(request('W/"abc"'), tag)).toBe(true);
		expect(ifNoneMatchMatches(request('*'), tag)).toBe(true);
	});
	it('does not match another tag, a prefix or no header', () => {
		expect(ifNoneMatchMatches(request('"abd"'), tag)).toBe(false);
		expect(ifNoneMatchMatches(request('"ab"'), tag)).toBe(false);
		expect(ifNoneMatchMatches(request('abc'), tag)).toBe(false);
		expect(ifNoneMatchMatches(request(), tag)).toBe(false);
	});
});

describe('jsonWithEtag', () => {
	it('answers 200 with the JSON, its ETag and a public one-minute cache', async () => {
		const response = jsonWithEtag(request(), { hello: 'sea' });
		expect(response.status).toBe(200);
		const body = await response.text();
		expect(JSON.parse(body)).toEqual({ hello: 'sea' });
		expect(response.headers.get('etag')).toBe(strongEtag(body));
		expect(response.headers.get('cache-control')).toBe('public, max-age=60');
		expect(response.headers.get('content-type')).toMatch(/^application\/json/);
	});

	it('answers 304 with no body, repeating ETag and Cache-Control, when the tag matches', async () => {
		const etag = jsonWithEtag(request(), { hello: 'sea' }).headers.get('etag')!;
		const response = jsonWithEtag(request(etag), { hello: 'sea' });
		expect(response.status).toBe(304);
		expect(await response.text()).toBe('');
		expect(response.headers.get('etag')).toBe(etag);
		expect(response.headers.get('cache-control')).toBe('public, max-age=60');
	});

	it('answers 200 again once the data changed', () => {
		const etag = jsonWithEtag(request(), { n: 1 }).headers.get('etag')!;
		expect(jsonWithEtag(request(etag), { n: 2 }).status).toBe(200);
	});
});

describe('withEtag', () => {
	it('uses a tag given in advance and keeps the content type', () => {
		const bytes = new Uint8Array([1, 2, 3]);
		const response = withEtag(request('"pre"'), bytes, {
			etag: '"pre"',
			headers: { 'content-type': 'image/png' }
		});
		expect(response.status).toBe(304);
		expect(response.headers.get('content-type')).toBe('image/png');
	});
});
