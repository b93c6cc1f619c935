import { DrizzlePostgreSQLAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia, TimeSpan } from 'lucia';
import { db } from '../db';
import { sessions, users, type Role } from '../db/schema';
import { httpsOrigin } from '../security-headers';

export interface SessionUser {
	id: string;
	email: string;
	name: string;
	roles: Role[];
}

function createLucia() {
	return new Lucia(new DrizzlePostgreSQLAdapter(db(), sessions, users), {
		sessionExpiresIn: new TimeSpan(30, 'd'),
		sessionCookie: {
			name: 'tideward_session',
			attributes: {
				// Secure, HttpOnly and Path are set with each cookie in session.ts (sessionCookieSecure).
				sameSite: 'lax'
			}
		},
		getUserAttributes: (attributes) => ({
			email: attributes.email,
			name: attributes.name,
			disabledAt: attributes.disabledAt
		})
	});
}

type TidewardLucia = ReturnType<typeof createLucia>;

declare module 'lucia' {
	interface Register {
		Lucia: TidewardLucia;
		DatabaseUserAttributes: {
			email: string;
			name: string;
			disabledAt: Date | null;
		};
	}
}

let instance: { lucia: TidewardLucia; database: unknown } | undefined;

/** Lucia bound to the open database (re-created if the database was reopened, as in tests). */
export function lucia(): TidewardLucia {
	const database = db();
	if (!instance || instance.database !== database) {
		instance = { lucia: createLucia(), database };
	}
	return instance.lucia;
}

/**
 * The session cookie is Secure exactly when the origin is https. Over plain http a browser would
 * refuse to store a Secure cookie, and nobody could sign in; over https it never travels in clear.
 * Called with the request's origin, which adapter-node builds from ORIGIN, the app's origin.
 */
export function sessionCookieSecure(origin: string): boolean {
	return httpsOrigin(origin);
}
