import type { Cookies } from '@sveltejs/kit';
import { describe, expect, it } from 'vitest';
import { createSupporter } from '$lib/server/auth/accounts';
import { endSession, readSession, startSession } from '$lib/server/auth/session';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
useTestDatabase();

type CookieOptions = Parameters<Cookies['set']>[2];

/** The cookies of one request: what the app read and what it set, with every option. */
function recordingCookies(sent: Record<string, string> = {}) {
	const set: { name: string; value: string; options: CookieOptions }[] = [];
	const cookies = {
		get: (name: string) => sent[name],
		set: (name: string, value: string, options: CookieOptions) => {
			set.push({ name, value, options });
		}
	} as unknown as Cookies;
	return { cookies, set };
}

describe('the session cookie', () => {
	it('is HttpOnly, SameSite=Lax, on the whole site, and Secure exactly on https', async () => {
		const userId = await createSupporter({ email: 'cookie.reader@example.test', name: 'Reader' });
		const cases = [
			['https://adopt.example.org/signin', true],
			['https://localhost/signin', true],
			['http://localhost:3000/signin', false],
			['http://127.0.0.1:3000/signin', false],
			['http://adopt.example.org/signin', false]
		] as const;
		for (const [address, secure] of cases) {
			const { cookies, set } = recordingCookies();
			await startSession(userId, cookies, new URL(address));
			expect(set).toHaveLength(1);
			const [{ name, value, options }] = set;
			expect(name).toBe('tideward_session');
			expect(value).toMatch(/^[a-z0-9]{20,}$/);
			expect(options).toMatchObject({ httpOnly: true, sameSite: 'lax', path: '/', secure });
			// Lucia's default lifetime for this app: 30 days, in seconds.
			expect(options.maxAge).toBe(30 * 24 * 60 * 60);

			// Signing out blanks it with the same attributes, so the browser replaces it.
			const session = await readSession(
				recordingCookies({ [name]: value }).cookies,
				new URL(address)
			);
			expect(session.user?.id).toBe(userId);
			const out = recordingCookies();
			await endSession(session.session!.id, out.cookies, new URL(address));
			expect(out.set).toEqual([
				{
					name,
					value: '',
					options: expect.objectContaining({
						httpOnly: true,
						sameSite: 'lax',
						path: '/',
						secure,
						maxAge: 0
					})
				}
			]);
		}
	});

	it('sets nothing for a visitor without a cookie', async () => {
		const { cookies, set } = recordingCookies();
		expect(await readSession(cookies, new URL('https://adopt.example.org/'))).toEqual({
			user: null,
			session: null
		});
		expect(set).toEqual([]);
	});

	it('clears an unknown session id with the same attributes', async () => {
		const { cookies, set } = recordingCookies({ tideward_session: 'no-such-session-id' });
		await readSession(cookies, new URL('https://adopt.example.org/'));
		expect(set).toEqual([
			{
				name: 'tideward_session',
				value: '',
				options: expect.objectContaining({ httpOnly: true, path: '/', secure: true, maxAge: 0 })
			}
		]);
	});
});
