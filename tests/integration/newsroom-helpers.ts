// Shared by the Newsroom integration tests: people, fake request events and row counts.
import { count } from 'drizzle-orm';
import type { PgTable } from 'drizzle-orm/pg-core';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Database } from '$lib/server/db';
import { users } from '$lib/server/db/schema';
import type { Role } from '$lib/roles';

export function fakeEvent(
	path: string,
	user: SessionUser | null,
	form: Record<string, string | string[]> = {},
	params: Record<string, string> = {},
	method = 'POST'
) {
	const url = new URL(`http://localhost${path}`);
	let body: FormData | undefined;
	if (method === 'POST') {
		body = new FormData();
		for (const [key, value] of Object.entries(form)) {
			for (const v of [value].flat()) body.append(key, v);
		}
	}
	return {
		request: new Request(url, { method, body }),
		url,
		locals: { user, session: null, requestId: 'test' },
		params,
		route: { id: null },
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

export function people(db: () => Database) {
	return async function person(roles: Role[]): Promise<SessionUser> {
		const id = crypto.randomUUID();
		const email = `${id.slice(0, 8)}@example.test`;
		const name = `Staff ${id.slice(0, 4)}`;
		await db().insert(users).values({ id, email, name });
		return { id, email, name, roles };
	};
}

export async function rows(db: () => Database, table: PgTable): Promise<number> {
	const [{ n }] = await db().select({ n: count() }).from(table);
	return n;
}

/** A calendar day `days` before today (UTC), for dates that must not lie in the future. */
export function daysAgo(days: number): string {
	return new Date(Date.now() - days * 86_400_000).toISOString().slice(0, 10);
}
