import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, inject } from 'vitest';
import { closeDatabase, openDatabase, type Database } from '$lib/server/db';

/**
 * Gives a test file its own throwaway database, copied from the dump that the global setup
 * migrated once. Call at the top of the file; use the returned getter inside tests.
 */
export function useTestDatabase(): () => Database {
	let database: Database | undefined;
	beforeAll(async () => {
		process.env.ARGON2_TEST_PARAMS = '1';
		const dump = new Blob([readFileSync(inject('migratedDump'))]);
		database = await openDatabase({ loadDataDir: dump, migrate: false });
	});
	afterAll(async () => {
		await closeDatabase();
	});
	return () => {
		if (!database) throw new Error('The test database is not open yet.');
		return database;
	};
}
