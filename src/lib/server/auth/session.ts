import { and, eq, isNull } from 'drizzle-orm';
import type { Cookies } from '@sveltejs/kit';
import type { Cookie } from 'lucia';
import { db } from '../db';
import { roles as rolesTable, users, type Role } from '../db/schema';
import { lucia, sessionCookieSecure, type SessionUser } from './lucia';

const SESSION_ID = /^[a-z2-7]{1,100}$/;

export async function rolesOf(userId: string): Promise<Role[]> {
	const rows = await db()
		.select({ role: rolesTable.role })
		.from(rolesTable)
		.where(eq(rolesTable.userId, userId));
	return rows.map((r) => r.role).sort();
}

function setCookie(cookies: Cookies, cookie: Cookie, url: URL): void {
	cookies.set(cookie.name, cookie.value, {
		...cookie.attributes,
		path: '/',
		httpOnly: true,
		sameSite: 'lax',
		secure: sessionCookieSecure(url.origin)
	});
}

/** Starts a session for an active user and sets its cookie. */
export async function startSession(userId: string, cookies: Cookies, url: URL): Promise<void> {
	const active = await db()
		.select({ id: users.id })
		.from(users)
		.where(and(eq(users.id, userId), isNull(users.disabledAt)));
	if (active.length === 0) throw new Error('This account is disabled.');
	const session = await lucia().createSession(userId, {});
	setCookie(cookies, lucia().createSessionCookie(session.id), url);
}

export async function endSession(sessionId: string, cookies: Cookies, url: URL): Promise<void> {
	await lucia().invalidateSession(sessionId);
	setCookie(cookies, lucia().createBlankSessionCookie(), url);
}

/** Reads the session cookie once per request; refreshes it when lucia extends the session. */
export async function readSession(
	cookies: Cookies,
	url: URL
): Promise<{ user: SessionUser | null; session: App.Locals['session'] }> {
	const sessionId = cookies.get(lucia().sessionCookieName);
	if (!sessionId) return { user: null, session: null };
	// Lucia's session ids are lower-case base32. Anything else was not made here; looked up, a
	// forged cookie with a NUL ("%00") failed the database query and every page answered 500.
	if (!SESSION_ID.test(sessionId)) {
		setCookie(cookies, lucia().createBlankSessionCookie(), url);
		return { user: null, session: null };
	}
	const { session, user } = await lucia().validateSession(sessionId);
	if (!session || !user || user.disabledAt) {
		if (session) await lucia().invalidateSession(session.id);
		setCookie(cookies, lucia().createBlankSessionCookie(), url);
		return { user: null, session: null };
	}
	if (session.fresh) setCookie(cookies, lucia().createSessionCookie(session.id), url);
	return {
		session,
		user: { id: user.id, email: user.email, name: user.name, roles: await rolesOf(user.id) }
	};
}
