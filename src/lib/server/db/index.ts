import { PGlite } from '@electric-sql/pglite';
import type { ExtractTablesWithRelations } from 'drizzle-orm';
import { drizzle as drizzleNodePg } from 'drizzle-orm/node-postgres';
import { migrate as migrateNodePg } from 'drizzle-orm/node-postgres/migrator';
import type { PgDatabase, PgQueryResultHKT } from 'drizzle-orm/pg-core';
import { drizzle as drizzlePglite } from 'drizzle-orm/pglite';
import { migrate as migratePglite } from 'drizzle-orm/pglite/migrator';
import { resolve } from 'node:path';
import pg from 'pg';
import { lockDataDir } from './lock';
import * as schema from './schema';

export type Schema = typeof schema;
export type Database = PgDatabase<PgQueryResultHKT, Schema, ExtractTablesWithRelations<Schema>>;
export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0];
/** Either the database or a transaction on it: what data functions take. */
export type Executor = Database | Transaction;

export interface DatabaseOptions {
	/** PostgreSQL server URL; when absent, PGlite stores its files under `dataDir`. */
	databaseUrl?: string;
	dataDir?: string;
	/** A PGlite data dump to start from (tests: migrated once, copied per file). */
	loadDataDir?: Blob | File;
	migrationsFolder?: string;
	migrate?: boolean;
}

interface OpenDatabase {
	db: Database;
	kind: 'pglite' | 'postgres';
	pglite?: PGlite;
	close: () => Promise<void>;
}

// One database per process, kept on globalThis so `vite dev` reloading this module reuses it
// instead of opening the folder twice (which PGlite treats as a crash to recover from).
const holder = globalThis as typeof globalThis & { __tidewardDb?: Promise<OpenDatabase> };

export function defaultMigrationsFolder(): string {
	return resolve(process.env.MIGRATIONS_DIR ?? 'drizzle');
}

async function open(options: DatabaseOptions): Promise<OpenDatabase> {
	const migrationsFolder = options.migrationsFolder ?? defaultMigrationsFolder();
	if (options.databaseUrl) {
		const pool = new pg.Pool({ connectionString: options.databaseUrl, max: 10 });
		const db = drizzleNodePg(pool, { schema }) as unknown as Database;
		if (options.migrate !== false) await migrateNodePg(db as never, { migrationsFolder });
		return { db, kind: 'postgres', close: () => pool.end() };
	}
	const dataDir = options.dataDir ? resolve(options.dataDir) : undefined;
	const release = dataDir ? lockDataDir(dataDir) : () => {};
	try {
		const pglite = new PGlite({
			dataDir: dataDir ?? 'memory://',
			loadDataDir: options.loadDataDir
		});
		await pglite.waitReady;
		const db = drizzlePglite(pglite, { schema }) as unknown as Database;
		if (options.migrate !== false) await migratePglite(db as never, { migrationsFolder });
		return {
			db,
			kind: 'pglite',
			pglite,
			close: async () => {
				try {
					if (!pglite.closed) await pglite.close();
				} finally {
					release();
				}
			}
		};
	} catch (error) {
		release();
		throw error;
	}
}

let current: OpenDatabase | undefined;

/** Opens the process's database once; later calls return the same one. */
export async function openDatabase(options: DatabaseOptions = optionsFromEnv()): Promise<Database> {
	holder.__tidewardDb ??= open(options);
	try {
		current = await holder.__tidewardDb;
	} catch (error) {
		holder.__tidewardDb = undefined;
		throw error;
	}
	return current.db;
}

export function optionsFromEnv(env: NodeJS.ProcessEnv = process.env): DatabaseOptions {
	if (env.DATABASE_URL) return { databaseUrl: env.DATABASE_URL };
	return { dataDir: env.DATA_DIR ?? './data/tideward' };
}

/** The open database. Call `openDatabase()` first (the server's `init` hook does). */
export function db(): Database {
	if (!current) throw new Error('The database is not open yet: call openDatabase() first.');
	return current.db;
}

export function databaseKind(): 'pglite' | 'postgres' | 'closed' {
	return current?.kind ?? 'closed';
}

export async function closeDatabase(): Promise<void> {
	const pending = holder.__tidewardDb;
	holder.__tidewardDb = undefined;
	current = undefined;
	if (pending) await (await pending).close();
}

/** Exposes the PGlite instance (tests dump it); undefined on a PostgreSQL server. */
export function pgliteInstance(): PGlite | undefined {
	return current?.pglite;
}

export { schema };
