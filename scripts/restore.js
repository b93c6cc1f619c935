#!/usr/bin/env node
// `npm run restore -- <backup file> [--force]`: brings back what `npm run backup` took, into the
// database the environment names (DATA_DIR, or DATABASE_URL), and the app's files into DATA_DIR.
// A target that already holds something is left alone unless --force is given. The restored
// row counts are compared with the backup's before anything replaces the target.
//
// Embedded database: restored into a folder inside DATA_DIR first, counted, and only then moved
// into place, all under the data folder's lock (so no server opens it meanwhile).
// PostgreSQL: pg_restore --clean --if-exists --no-owner into DATABASE_URL (objects are owned by
// the user restoring them; the dump's other tables are dropped and made again, tables the dump
// does not know are left as they are).
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import {
	FILES,
	FolderInUse,
	LOCK_FILE,
	PG_DUMP,
	PGLITE_DUMP,
	appFiles,
	countDifferences,
	countRows,
	dataDirFromEnv,
	lockDataDir,
	pgConnection,
	readManifest,
	requireTool,
	runScript,
	Stop,
	stop,
	totalRows,
	unpackArchive,
	connectPostgres
} from './backup-archive.js';

const USAGE = 'Usage: npm run restore -- <backup file> [--force]';

/** @param {string[]} argv */
function parseArgs(argv) {
	let file;
	let force = false;
	for (const arg of argv) {
		if (arg === '--force') force = true;
		else if (arg.startsWith('-')) stop(`Unknown option ${arg}. ${USAGE}`);
		else if (file) stop(`Only one backup file at a time. ${USAGE}`);
		else file = arg;
	}
	if (!file) stop(`Name the backup file to restore. ${USAGE}`);
	return { file, force };
}

/** @param {number} n @param {string} one @param {string} many */
const plural = (n, one, many) => `${n} ${n === 1 ? one : many}`;

/**
 * Writes the backup's files into `dir`.
 * @param {Map<string, Buffer>} entries @param {string} dir
 */
function writeFiles(entries, dir) {
	for (const [name, data] of entries) {
		if (!name.startsWith(FILES)) continue;
		const path = join(dir, name.slice(FILES.length));
		mkdirSync(dirname(path), { recursive: true });
		writeFileSync(path, data);
	}
}

/**
 * @param {Map<string, Buffer>} entries
 * @param {import('./backup-archive.js').Manifest} manifest
 * @param {string} dataDir
 * @param {boolean} force
 */
async function restorePglite(entries, manifest, dataDir, force) {
	mkdirSync(dataDir, { recursive: true });
	let release;
	try {
		release = lockDataDir(dataDir);
	} catch (error) {
		if (!(error instanceof FolderInUse)) throw error;
		stop(
			`The data folder ${dataDir} is in use by a running Tideward server (pid ${error.pid}): stop it before restoring into it.`
		);
	}
	const staging = join(dataDir, `.tideward-restore-${process.pid}`);
	try {
		const present = readdirSync(dataDir).filter((name) => name !== LOCK_FILE);
		if (present.length > 0 && !force) {
			stop(
				`${dataDir} is not empty (${plural(present.length, 'entry', 'entries')}): set DATA_DIR to an empty or new folder, or add --force to replace what is there.`
			);
		}
		const { PGlite } = await import('@electric-sql/pglite');
		const dump = /** @type {Buffer} */ (entries.get(PGLITE_DUMP));
		const pglite = new PGlite({
			dataDir: staging,
			loadDataDir: new Blob([new Uint8Array(dump)], { type: 'application/x-gzip' })
		});
		let counts;
		try {
			await pglite.waitReady;
			counts = await countRows(pglite);
		} finally {
			await pglite.close();
		}
		const differences = countDifferences(manifest.tables, counts);
		if (differences.length > 0) {
			stop(
				`The restored database differs from the backup, nothing was replaced: ${differences[0]}.`
			);
		}
		// PGlite's dump holds the whole folder as it was, the backup's own lock included: the app's
		// files come from the backup's files/ alone, so that the two can never disagree.
		rmSync(join(staging, LOCK_FILE), { force: true });
		for (const name of appFiles(staging)) rmSync(join(staging, name), { force: true });
		writeFiles(entries, staging);
		for (const name of readdirSync(dataDir)) {
			if (name !== LOCK_FILE && join(dataDir, name) !== staging) {
				rmSync(join(dataDir, name), { recursive: true, force: true });
			}
		}
		for (const name of readdirSync(staging)) renameSync(join(staging, name), join(dataDir, name));
		return counts;
	} finally {
		rmSync(staging, { recursive: true, force: true });
		release();
	}
}

/**
 * @param {Map<string, Buffer>} entries
 * @param {import('./backup-archive.js').Manifest} manifest
 * @param {string} databaseUrl
 * @param {string} dataDir
 * @param {boolean} force
 */
async function restorePostgres(entries, manifest, databaseUrl, dataDir, force) {
	requireTool('pg_restore');
	const client = await connectPostgres(databaseUrl);
	const temp = join(tmpdir(), `tideward-restore-${process.pid}.pgdump`);
	try {
		const tables = Object.keys(await countRows(client));
		const others = Number(
			(
				await client.query(`SELECT count(*)::int AS n FROM pg_stat_activity
					WHERE datname = current_database() AND pid <> pg_backend_pid() AND backend_type = 'client backend'`)
			).rows[0].n
		);
		const files = appFiles(dataDir);
		if (!force) {
			if (tables.length > 0) {
				stop(
					`The database at DATABASE_URL is not empty (${plural(tables.length, 'table', 'tables')}): point DATABASE_URL at an empty database, or add --force to replace what is there.`
				);
			}
			if (files.length > 0) {
				stop(
					`${dataDir} already holds ${files.join(', ')}: set DATA_DIR to an empty folder, or add --force to replace it.`
				);
			}
			if (others > 0) {
				stop(
					`${plural(others, 'other session is', 'other sessions are')} connected to the database: stop the Tideward servers first, or add --force.`
				);
			}
		}
		writeFileSync(temp, /** @type {Buffer} */ (entries.get(PG_DUMP)), { mode: 0o600 });
		const { url, env } = pgConnection(databaseUrl);
		const run = spawnSync(
			'pg_restore',
			['--clean', '--if-exists', '--no-owner', '--exit-on-error', `--dbname=${url}`, temp],
			{ env, encoding: 'utf8' }
		);
		if (run.status !== 0) {
			stop(`pg_restore failed: ${(run.stderr || String(run.error)).trim().split('\n')[0]}`);
		}
		const counts = await countRows(client);
		const differences = countDifferences(manifest.tables, counts);
		if (differences.length > 0) {
			stop(`The restored database differs from the backup: ${differences[0]}.`);
		}
		// The files belong with the database they were backed up with: none of the old ones stay.
		for (const name of files) rmSync(join(dataDir, name), { force: true });
		mkdirSync(dataDir, { recursive: true });
		writeFiles(entries, dataDir);
		return counts;
	} finally {
		rmSync(temp, { force: true });
		await client.end();
	}
}

await runScript(async () => {
	const { file, force } = parseArgs(process.argv.slice(2));
	let entries;
	let manifest;
	try {
		entries = unpackArchive(readFileSync(file));
		manifest = readManifest(entries);
	} catch (error) {
		if (error instanceof Stop) throw error;
		const reason = /** @type {NodeJS.ErrnoException} */ (error);
		stop(
			reason.code === 'ENOENT'
				? `There is no file ${file}.`
				: `${file} cannot be restored: ${reason.message}.`
		);
	}
	const dataDir = dataDirFromEnv();
	const databaseUrl = process.env.DATABASE_URL?.trim();
	if (manifest.database === 'pglite' && databaseUrl) {
		stop(
			`${file} holds an embedded (PGlite) database, but DATABASE_URL is set: unset it to restore into DATA_DIR (${dataDir}).`
		);
	}
	if (manifest.database === 'postgres' && !databaseUrl) {
		stop(
			`${file} holds a PostgreSQL dump: set DATABASE_URL to the (empty) database to restore it into.`
		);
	}
	const counts = databaseUrl
		? await restorePostgres(entries, manifest, databaseUrl, dataDir, force)
		: await restorePglite(entries, manifest, dataDir, force);
	const where = databaseUrl ? 'the PostgreSQL database at DATABASE_URL' : dataDir;
	const files = manifest.files.length ? `, and ${manifest.files.join(', ')} into ${dataDir}` : '';
	console.log(
		`Restored the backup of ${manifest.createdAt} into ${where}: ${plural(Object.keys(counts).length, 'table', 'tables')}, ${plural(totalRows(counts), 'row', 'rows')} (every count matches the backup)${files}.`
	);
});
