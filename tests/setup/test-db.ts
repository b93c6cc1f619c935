import { randomBytes } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { afterAll, beforeAll, inject } from 'vitest';
import { closeDatabase, openDatabase, type Database } from '$lib/server/db';
import { databaseUrl, onServer } from './global-db';

/**
 * Gives a test file its own throwaway database, copied from what the global setup migrated once
 * (tests/setup/global-db.ts): a PGlite loaded from the dump, or, when DATABASE_URL is set, a new
 * database on that server created from the template and dropped after the file. Call at the top
 * of the file; use the returned getter inside tests.
 */
export function useTestDatabase(): () => Database {
	let database: Database | undefined;
	let drop: (() => Promise<void>) | undefined;
	beforeAll(async () => {
		process.env.ARGON2_TEST_PARAMS = '1';
		const source = inject('testDatabase');
		if (source.kind === 'postgres') {
			const name = `${source.prefix}${randomBytes(6).toString('hex')}`;
			await onServer(source.url, `CREATE DATABASE "${name}" TEMPLATE "${source.template}"`);
			drop = () => onServer(source.url, `DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`);
			database = await openDatabase({
				databaseUrl: databaseUrl(source.url, name),
				migrate: false
			});
		} else {
			const dump = new Blob([readFileSync(source.dump)]);
			database = await openDatabase({ loadDataDir: dump, migrate: false });
		}
	});
	afterAll(async () => {
		try {
			await closeDatabase();
		} finally {
			await drop?.();
		}
	});
	return () => {
		if (!database) throw new Error('The test database is not open yet.');
		return database;
	};
}
