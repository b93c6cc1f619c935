#!/usr/bin/env node
// `npm run backup [-- --out <folder>]`: one file, backups/tideward-YYYYMMDD-HHMMSS.tar.gz (UTC),
// holding the database and the app's other files in DATA_DIR; `npm run restore` brings it back.
//
// Embedded database (PGlite in DATA_DIR): taken while no server runs. PGlite serves one process,
// and a copy is consistent only while nothing writes the folder, so the backup takes the folder's
// lock as the server does and refuses, in one line, when a server holds it. (Copying through the
// running server instead would need an admin endpoint that hands the whole database — password
// hashes and secrets included — to an HTTP client, and hold it in the server's memory; a stop of a
// few seconds is the simpler and safer price. A server that must not stop belongs on PostgreSQL.)
//
// PostgreSQL (DATABASE_URL): taken while the servers run, with pg_dump --format=custom inside one
// exported snapshot, the same one the row counts are read from.
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, renameSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, relative, resolve } from 'node:path';
import {
	FolderInUse,
	MANIFEST,
	PG_DUMP,
	PGLITE_DUMP,
	FILES,
	appFiles,
	countRows,
	dataDirFromEnv,
	isDirectory,
	lockDataDir,
	packArchive,
	pgConnection,
	requireTool,
	runScript,
	size,
	stop,
	totalRows,
	connectPostgres
} from './backup-archive.js';

/** @param {Date} date */
function stamp(date) {
	const iso = date.toISOString();
	return `${iso.slice(0, 10).replaceAll('-', '')}-${iso.slice(11, 19).replaceAll(':', '')}`;
}

/** @param {string} dataDir */
function fileEntries(dataDir) {
	return appFiles(dataDir).map((path) => ({
		name: FILES + path,
		data: readFileSync(join(dataDir, path))
	}));
}

/** @param {string} dataDir */
async function backupPglite(dataDir) {
	if (!isDirectory(dataDir) || !isDirectory(join(dataDir, 'base'))) {
		stop(`There is no embedded database in ${dataDir}: set DATA_DIR to Tideward's data folder.`);
	}
	let release;
	try {
		release = lockDataDir(dataDir);
	} catch (error) {
		if (!(error instanceof FolderInUse)) throw error;
		stop(
			`The data folder ${dataDir} is in use by a running Tideward server (pid ${error.pid}): stop it, run npm run backup, then start it again (an embedded database is copied only while no server writes it).`
		);
	}
	try {
		const { PGlite } = await import('@electric-sql/pglite');
		const pglite = new PGlite({ dataDir });
		try {
			await pglite.waitReady;
			await pglite.exec('CHECKPOINT');
			const tables = await countRows(pglite);
			const dump = await pglite.dumpDataDir('gzip');
			const version = await pglite.query('SHOW server_version');
			return {
				tables,
				database: { name: PGLITE_DUMP, data: Buffer.from(await dump.arrayBuffer()) },
				files: fileEntries(dataDir),
				tools: {
					pglite: String(/** @type {any} */ (version.rows[0]).server_version)
				}
			};
		} finally {
			await pglite.close();
		}
	} finally {
		release();
	}
}

/** @param {string} databaseUrl @param {string} dataDir */
async function backupPostgres(databaseUrl, dataDir) {
	const pgDump = requireTool('pg_dump');
	const client = await connectPostgres(databaseUrl);
	const temp = join(tmpdir(), `tideward-backup-${process.pid}.pgdump`);
	try {
		// The counts and the dump see the same moment: pg_dump joins this transaction's snapshot.
		await client.query('BEGIN ISOLATION LEVEL REPEATABLE READ, READ ONLY');
		const snapshot = (await client.query('SELECT pg_export_snapshot() AS id')).rows[0].id;
		const tables = await countRows(client);
		const server = (await client.query('SHOW server_version')).rows[0].server_version;
		const { url, env } = pgConnection(databaseUrl);
		const run = spawnSync(
			'pg_dump',
			['--format=custom', `--snapshot=${snapshot}`, `--file=${temp}`, `--dbname=${url}`],
			{ env, encoding: 'utf8' }
		);
		if (run.status !== 0) {
			stop(`pg_dump failed: ${(run.stderr || String(run.error)).trim().split('\n')[0]}`);
		}
		await client.query('COMMIT');
		return {
			tables,
			database: { name: PG_DUMP, data: readFileSync(temp) },
			files: fileEntries(dataDir),
			tools: { pg_dump: pgDump, server: String(server) }
		};
	} finally {
		rmSync(temp, { force: true });
		await client.end();
	}
}

/**
 * Writes a backup of the database the environment names into `outDir`; returns the file's path.
 * @param {{ outDir?: string, env?: NodeJS.ProcessEnv, now?: Date }} [options]
 */
async function backup({ outDir = 'backups', env = process.env, now = new Date() } = {}) {
	const dataDir = dataDirFromEnv(env);
	const databaseUrl = env.DATABASE_URL?.trim();
	const taken = databaseUrl
		? await backupPostgres(databaseUrl, dataDir)
		: await backupPglite(dataDir);
	/** @type {import('./backup-archive.js').Manifest} */
	const manifest = {
		format: 'tideward-backup',
		version: 1,
		createdAt: now.toISOString(),
		database: databaseUrl ? 'postgres' : 'pglite',
		tables: taken.tables,
		files: taken.files.map((f) => f.name.slice(FILES.length)),
		tools: { node: process.version, ...taken.tools }
	};
	const archive = packArchive([
		{ name: MANIFEST, data: Buffer.from(JSON.stringify(manifest, null, '\t') + '\n'), mtime: now },
		{ ...taken.database, mtime: now },
		...taken.files.map((f) => ({ ...f, mtime: now }))
	]);
	mkdirSync(outDir, { recursive: true });
	const file = resolve(outDir, `tideward-${stamp(now)}.tar.gz`);
	// Written aside and renamed, so that a half-written file never looks like a backup. Readable
	// by its owner only: it holds password hashes, sessions and the app's secrets.
	const partial = `${file}.partial`;
	writeFileSync(partial, archive, { mode: 0o600, flag: 'wx' });
	try {
		renameSync(partial, file);
	} catch (error) {
		rmSync(partial, { force: true });
		throw error;
	}
	return { file, manifest, bytes: archive.length, dataDir };
}

/** @param {string[]} argv */
function parseArgs(argv) {
	let outDir = 'backups';
	for (let i = 0; i < argv.length; i++) {
		if (argv[i] === '--out' && argv[i + 1]) outDir = argv[++i];
		else if (argv[i].startsWith('--out=')) outDir = argv[i].slice('--out='.length);
		else stop(`Unknown argument ${argv[i]}. Usage: npm run backup [-- --out <folder>]`);
	}
	return { outDir };
}

/** @param {string} file */
function shortPath(file) {
	const rel = relative(process.cwd(), file);
	return rel.startsWith('..') ? file : rel;
}

await runScript(async () => {
	const { outDir } = parseArgs(process.argv.slice(2));
	const { file, manifest, bytes, dataDir } = await backup({ outDir });
	const what =
		manifest.database === 'pglite'
			? `the embedded database in ${dataDir}`
			: 'the PostgreSQL database at DATABASE_URL';
	const files =
		manifest.files.length === 1 ? '1 other file' : `${manifest.files.length} other files`;
	console.log(
		`Backed up ${what} (${Object.keys(manifest.tables).length} tables, ${totalRows(manifest.tables)} rows) and ${files} to ${shortPath(file)} (${size(bytes)}).`
	);
});
