import { DrizzlePostgreSQLAdapter } from '@lucia-auth/adapter-drizzle';
import { Lucia, TimeSpan } from 'lucia';
import { db } from '../db';
import { sessions, users, type Role } from '../db/schema';

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
				// Secure outside localhost: set per request in hooks.server.ts (see sessionCookieSecure).
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

/** Cookies are Secure everywhere but plain-http localhost (dev, demo, tests). */
export function sessionCookieSecure(url: URL): boolean {
	const local = ['localhost', '127.0.0.1', '[::1]'].includes(url.hostname);
	return url.protocol === 'https:' || !local;
}
