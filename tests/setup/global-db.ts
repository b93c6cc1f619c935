import { PGlite } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { drizzle as drizzleNodePg } from 'drizzle-orm/node-postgres';
import { migrate as migrateNodePg } from 'drizzle-orm/node-postgres/migrator';
import { randomBytes } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import pg from 'pg';
import type { TestProject } from 'vitest/node';

/** Where each test file's database comes from (tests/setup/test-db.ts). */
export type TestDatabaseSource =
	/** A PGlite dump of the migrated schema, loaded into a new in-memory PGlite per file. */
	| { kind: 'pglite'; dump: string }
	/**
	 * A migrated template database on the PostgreSQL server at DATABASE_URL; each file creates
	 * `<prefix><random>` from it and drops it at the end.
	 */
	| { kind: 'postgres'; url: string; template: string; prefix: string };

// Creating and migrating a database takes seconds; do it once for the whole run and let each
// test file start from a copy: of a PGlite dump by default, of a template database on the
// server when DATABASE_URL is set.
export default async function setup(project: TestProject) {
	if (process.env.DATABASE_URL) return setupServer(project, process.env.DATABASE_URL);
	const dir = mkdtempSync(join(tmpdir(), 'tideward-test-db-'));
	const pglite = new PGlite();
	await migrate(drizzle(pglite), { migrationsFolder: resolve('drizzle') });
	const dump = await pglite.dumpDataDir('none');
	await pglite.close();
	const file = join(dir, 'migrated.tar');
	writeFileSync(file, Buffer.from(await dump.arrayBuffer()));
	project.provide('testDatabase', { kind: 'pglite', dump: file });
	return () => rmSync(dir, { recursive: true, force: true });
}

/**
 * The database at DATABASE_URL is only used to create and drop others (it needs CREATEDB);
 * nothing is written into it. Names carry a per-run prefix, so that several runs can share a
 * server and the end of the run drops whatever a crashed file left behind.
 */
async function setupServer(project: TestProject, url: string) {
	const prefix = `tideward_test_${randomBytes(4).toString('hex')}_`;
	const template = `${prefix}template`;
	await onServer(url, `CREATE DATABASE "${template}"`);
	const pool = new pg.Pool({ connectionString: databaseUrl(url, template), max: 1 });
	try {
		await migrateNodePg(drizzleNodePg(pool), { migrationsFolder: resolve('drizzle') });
	} finally {
		// CREATE DATABASE … TEMPLATE refuses while anyone is connected to the template.
		await pool.end();
	}
	project.provide('testDatabase', { kind: 'postgres', url, template, prefix });
	return async () => {
		const client = new pg.Client({ connectionString: url });
		await client.connect();
		try {
			const { rows } = await client.query<{ datname: string }>(
				'SELECT datname FROM pg_database WHERE starts_with(datname, $1)',
				[prefix]
			);
			for (const { datname } of rows) {
				await client.query(`DROP DATABASE IF EXISTS "${datname}" WITH (FORCE)`);
			}
		} finally {
			await client.end();
		}
	};
}

/** The same server URL, naming another database. */
export function databaseUrl(url: string, database: string): string {
	const next = new URL(url);
	next.pathname = `/${encodeURIComponent(database)}`;
	return next.toString();
}

/** Runs one statement on the server at `url` on a connection of its own. */
export async function onServer(url: string, statement: string): Promise<void> {
	const client = new pg.Client({ connectionString: url });
	await client.connect();
	try {
		await client.query(statement);
	} finally {
		await client.end();
	}
}

declare module 'vitest' {
	export interface ProvidedContext {
		testDatabase: TestDatabaseSource;
	}
}
