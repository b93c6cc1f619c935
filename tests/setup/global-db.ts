import { PGlite } from '@electric-sql/pglite';
import { drizzle } from 'drizzle-orm/pglite';
import { migrate } from 'drizzle-orm/pglite/migrator';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import type { TestProject } from 'vitest/node';

// Creating and migrating a PGlite database takes seconds; do it once for the whole run and let
// each test file start from a copy of the dump (tests/setup/test-db.ts).
export default async function setup(project: TestProject) {
	const dir = mkdtempSync(join(tmpdir(), 'tideward-test-db-'));
	const pglite = new PGlite();
	await migrate(drizzle(pglite), { migrationsFolder: resolve('drizzle') });
	const dump = await pglite.dumpDataDir('none');
	await pglite.close();
	const file = join(dir, 'migrated.tar');
	writeFileSync(file, Buffer.from(await dump.arrayBuffer()));
	project.provide('migratedDump', file);
	return () => rmSync(dir, { recursive: true, force: true });
}

declare module 'vitest' {
	export interface ProvidedContext {
		migratedDump: string;
	}
}
