import { sql } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { users } from '$lib/server/db/schema';
import { useTestDatabase } from '../setup/test-db';

const db = useTestDatabase();

describe('test database', () => {
	it('starts migrated and empty', async () => {
		const rows = await db().select().from(users);
		expect(rows).toEqual([]);
		const tables = await db().execute(
			sql`select count(*)::int as n from information_schema.tables where table_schema = 'public'`
		);
		expect((tables as { rows: { n: number }[] }).rows[0].n).toBeGreaterThanOrEqual(10);
	});

	it('refuses a second account with the same e-mail in another case', async () => {
		await db().insert(users).values({ id: 'u1', email: 'Ana@example.test', name: 'Ana' });
		await expect(
			db().insert(users).values({ id: 'u2', email: 'ana@EXAMPLE.test', name: 'Ana' })
		).rejects.toThrow();
	});
});
