import { describe, expect, it } from 'vitest';
import { sameOriginForms } from './csrf';

// The same rule as SvelteKit's own check (kit/src/runtime/server/respond.js): a form post whose
// Origin is missing or foreign is refused, except on the one-click unsubscribe path (RFC 8058 §3:
// the POST comes from the mail client, with no cookie and often no Origin).
async function post(path: string, headers: Record<string, string>) {
	const url = new URL(`https://tideward.example${path}`);
	const request = new Request(url, { method: 'POST', headers, body: 'a=1' });
	let reached = false;
	const response = await sameOriginForms({
		event: { request, url } as never,
		resolve: async () => {
			reached = true;
			return new Response('ok');
		}
	});
	return { status: response.status, reached };
}

const form = { 'content-type': 'application/x-www-form-urlencoded' };

describe('sameOriginForms', () => {
	it('lets same-origin form posts through', async () => {
		expect(
			await post('/account?/preferences', { ...form, origin: 'https://tideward.example' })
		).toEqual({ status: 200, reached: true });
	});

	it('refuses form posts from another origin or with none', async () => {
		for (const origin of ['https://evil.example', 'null', undefined]) {
			const headers: Record<string, string> = { ...form };
			if (origin) headers.origin = origin;
			for (const type of [
				'application/x-www-form-urlencoded',
				'multipart/form-data; boundary=x',
				'text/plain'
			]) {
				headers['content-type'] = type;
				expect(await post('/account?/preferences', headers)).toEqual({
					status: 403,
					reached: false
				});
			}
		}
	});

	it('lets JSON posts through (the processor’s webhook), as SvelteKit does', async () => {
		expect(await post('/api/webhooks/stripe', { 'content-type': 'application/json' })).toEqual({
			status: 200,
			reached: true
		});
	});

	it('lets the one-click unsubscribe through from anywhere, and nothing beside it', async () => {
		expect(await post('/api/unsubscribe/abc.def', form)).toEqual({ status: 200, reached: true });
		expect(await post('/api/unsubscribe/abc/extra', form)).toEqual({ status: 403, reached: false });
		expect(await post('/api/unsubscribe', form)).toEqual({ status: 403, reached: false });
	});
});
