import { describe, expect, it } from 'vitest';
import { baseURL } from './browser';

// Against the built server: form posts from elsewhere are refused before any page code runs, and
// the RFC 8058 one-click unsubscribe endpoint is the one exception (mail clients post to it with
// no cookie and no Origin; RFC 8058 section 3.2).
const form = { 'content-type': 'application/x-www-form-urlencoded' };

describe('cross-site form posts', () => {
	it('are refused on a page action, with a foreign Origin or none', async () => {
		for (const origin of ['https://elsewhere.example', null]) {
			const headers: Record<string, string> = { ...form };
			if (origin) headers.origin = origin;
			const response = await fetch(`${baseURL()}/signin?/password`, {
				method: 'POST',
				headers,
				body: 'email=a%40example.test&password=x',
				redirect: 'manual'
			});
			expect(response.status).toBe(403);
			expect(await response.text()).toContain('Cross-site POST form submissions are forbidden');
		}
	});

	it('reach the one-click unsubscribe endpoint, which judges the token itself', async () => {
		const response = await fetch(`${baseURL()}/api/unsubscribe/not-a-real-token`, {
			method: 'POST',
			headers: form,
			body: 'List-Unsubscribe=One-Click',
			redirect: 'manual'
		});
		expect(response.status).toBe(400);
		expect(await response.text()).toContain('not valid');
	});
});
