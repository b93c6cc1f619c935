// What `npm run backup` and `npm run restore` share: the backup file's layout, the data folder's
// lock, and the row counts that let a restore prove it brought everything back.
//
// A backup is one gzip-compressed tar file (readable with `tar tzf`) holding
//   tideward-backup.json      the manifest: kind of database, time, row count of every table
//   database/pgdata.tar.gz    an embedded database: PGlite's own dumpDataDir() of DATA_DIR
//   database/tideward.pgdump  a PostgreSQL server: pg_dump --format=custom
//   files/…                   the app's other files in DATA_DIR (the local payment service's state)
// Photos and caught e-mail are rows in the database, so they travel with it.
import {
	closeSync,
	existsSync,
	openSync,
	readFileSync,
	readdirSync,
	rmSync,
	statSync,
	writeSync
} from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join, posix, relative, resolve, sep } from 'node:path';
import { gunzipSync, gzipSync } from 'node:zlib';

export const MANIFEST = 'tideward-backup.json';
export const PGLITE_DUMP = 'database/pgdata.tar.gz';
export const PG_DUMP = 'database/tideward.pgdump';
export const FILES = 'files/';
export const DEFAULT_DATA_DIR = './data/tideward';
export const LOCK_FILE = 'tideward.lock';

/**
 * @typedef {{ format: 'tideward-backup', version: 1, createdAt: string, database: 'pglite' | 'postgres',
 *   tables: Record<string, number>, files: string[], tools: Record<string, string> }} Manifest
 * @typedef {{ name: string, data: Buffer, mtime?: Date }} Entry
 */

/** A refusal or failure told to the operator in one line (see `runScript`). */
export class Stop extends Error {}

/**
 * Stops the script with one line; `finally` blocks still release locks and temporary files.
 * @param {string} message
 * @returns {never}
 */
export function stop(message) {
	throw new Stop(message);
}

/**
 * Runs a script's body; a Stop prints its one line and exits with 1, anything else is a bug and
 * keeps its stack.
 * @param {() => Promise<void>} body
 */
export async function runScript(body) {
	try {
		await body();
	} catch (error) {
		if (!(error instanceof Stop)) throw error;
		console.error(error.message);
		process.exitCode = 1;
	}
}

/**
 * The URL without its password (which goes to pg_dump through PGPASSWORD, not the command line
 * that other users of the machine can read), and the environment that carries it.
 * @param {string} databaseUrl
 */
export function pgConnection(databaseUrl) {
	const url = new URL(databaseUrl);
	const env = { ...process.env };
	if (url.password) {
		env.PGPASSWORD = decodeURIComponent(url.password);
		url.password = '';
	}
	return { url: url.toString(), env };
}

/**
 * A connected client for DATABASE_URL, or a stop with one line saying why not.
 * @param {string} databaseUrl
 */
export async function connectPostgres(databaseUrl) {
	const { default: pg } = await import('pg');
	const client = new pg.Client({ connectionString: databaseUrl });
	try {
		await client.connect();
	} catch (error) {
		stop(`Cannot connect to DATABASE_URL: ${/** @type {Error} */ (error).message}`);
	}
	return client;
}

/** @param {string} tool @returns {string} its version line */
export function requireTool(tool) {
	const probe = spawnSync(tool, ['--version'], { encoding: 'utf8' });
	if (probe.error || probe.status !== 0) {
		stop(
			`${tool} is not installed: install PostgreSQL's client tools of the server's major version or newer (Debian: apt-get install postgresql-client).`
		);
	}
	return probe.stdout.trim();
}

/** @param {NodeJS.ProcessEnv} env */
export function dataDirFromEnv(env = process.env) {
	return resolve(env.DATA_DIR || DEFAULT_DATA_DIR);
}

/** PostgreSQL's own entries in a data folder (PGlite keeps a whole cluster there). */
const POSTGRES_ENTRY =
	/^(PG_VERSION|base|global|pg_[a-z_]+(\.conf)?|postgresql(\.auto)?\.conf|postmaster\.(pid|opts))$/;

/**
 * The app's files in a data folder, as paths relative to it: everything but PostgreSQL's own
 * entries, the lock, and temporary files of a write in progress.
 * @param {string} dataDir
 * @returns {string[]}
 */
export function appFiles(dataDir) {
	if (!existsSync(dataDir)) return [];
	/** @type {string[]} */
	const found = [];
	/** @param {string} dir */
	const walk = (dir) => {
		for (const entry of readdirSync(dir, { withFileTypes: true })) {
			const path = join(dir, entry.name);
			const rel = relative(dataDir, path).split(sep).join('/');
			if (dir === dataDir && (POSTGRES_ENTRY.test(entry.name) || entry.name === LOCK_FILE))
				continue;
			if (entry.name.startsWith('.tideward-restore-') || entry.name.endsWith('.tmp')) continue;
			if (entry.isDirectory()) walk(path);
			else if (entry.isFile()) found.push(rel);
		}
	};
	walk(dataDir);
	return found.sort();
}

class FolderInUse extends Error {
	/** @param {string} dataDir @param {number} pid */
	constructor(dataDir, pid) {
		super(`The data folder ${dataDir} is in use by a running Tideward process (pid ${pid}).`);
		this.pid = pid;
	}
}
export { FolderInUse };

/** @param {number} pid */
function isAlive(pid) {
	try {
		process.kill(pid, 0);
		return true;
	} catch (error) {
		return /** @type {NodeJS.ErrnoException} */ (error).code === 'EPERM';
	}
}

/**
 * Takes the data folder's lock the way the server does (src/lib/server/db/lock.ts: a file holding
 * the owner's PID, taken over from a dead owner), so that no server opens the folder while we read
 * or replace it. Throws FolderInUse when a live process holds it.
 * @param {string} dataDir
 * @returns {() => void} releases the lock
 */
export function lockDataDir(dataDir) {
	const lockPath = join(dataDir, LOCK_FILE);
	for (let attempt = 0; attempt < 3; attempt++) {
		try {
			const fd = openSync(lockPath, 'wx');
			writeSync(fd, String(process.pid));
			closeSync(fd);
			let released = false;
			return () => {
				if (released) return;
				released = true;
				rmSync(lockPath, { force: true });
			};
		} catch (error) {
			if (/** @type {NodeJS.ErrnoException} */ (error).code !== 'EEXIST') throw error;
			const owner = Number.parseInt(readFileSync(lockPath, 'utf8').trim(), 10);
			if (Number.isInteger(owner) && owner !== process.pid && isAlive(owner)) {
				throw new FolderInUse(dataDir, owner);
			}
			rmSync(lockPath, { force: true });
		}
	}
	throw new Error(`Could not take the lock on ${dataDir}.`);
}

/** Tables of the database, schema-qualified, in a stable order. */
export const TABLES_SQL = `SELECT table_schema AS schema, table_name AS name FROM information_schema.tables
	WHERE table_type = 'BASE TABLE' AND table_schema NOT IN ('pg_catalog', 'information_schema')
	ORDER BY 1, 2`;

/** @param {string} name */
export const quoteIdent = (name) => `"${name.replaceAll('"', '""')}"`;

/**
 * Row counts of every table, through any client with a `query(sql)` that answers `{ rows }`.
 * @param {{ query: (sql: string) => Promise<{ rows: any[] }> }} client
 * @returns {Promise<Record<string, number>>}
 */
export async function countRows(client) {
	/** @type {Record<string, number>} */
	const counts = {};
	const { rows } = await client.query(TABLES_SQL);
	for (const { schema, name } of rows) {
		const result = await client.query(
			`SELECT count(*)::int AS n FROM ${quoteIdent(schema)}.${quoteIdent(name)}`
		);
		counts[`${schema}.${name}`] = Number(result.rows[0].n);
	}
	return counts;
}

/**
 * The tables whose counts differ, as readable lines (empty when all match).
 * @param {Record<string, number>} expected @param {Record<string, number>} actual
 */
export function countDifferences(expected, actual) {
	const names = [...new Set([...Object.keys(expected), ...Object.keys(actual)])].sort();
	return names
		.filter((name) => expected[name] !== actual[name])
		.map(
			(name) =>
				`${name}: ${actual[name] ?? 'missing'} rows, the backup had ${expected[name] ?? 'none'}`
		);
}

/** @param {Record<string, number>} counts */
export const totalRows = (counts) => Object.values(counts).reduce((sum, n) => sum + n, 0);

/** @param {number} bytes */
export function size(bytes) {
	if (bytes < 1024 * 1024) return `${Math.max(1, Math.round(bytes / 1024))} KB`;
	return `${(bytes / 1024 / 1024).toFixed(1)} MB`;
}

// ── The tar container (POSIX ustar: regular files only) ──────────────────────────────────────
// Written here rather than with a tar package: the app has none among its dependencies, and the
// few dozen lines below are all a backup of a handful of files needs.

/** @param {Buffer} block @param {number} offset @param {number} length @param {number} value */
function octal(block, offset, length, value) {
	block.write(value.toString(8).padStart(length - 1, '0') + '\0', offset, length, 'ascii');
}

/** @param {string} name @returns {[string, string]} [prefix, name] */
function splitName(name) {
	if (Buffer.byteLength(name) <= 100) return ['', name];
	for (let i = name.indexOf('/'); i !== -1; i = name.indexOf('/', i + 1)) {
		const prefix = name.slice(0, i);
		const rest = name.slice(i + 1);
		if (Buffer.byteLength(prefix) <= 155 && Buffer.byteLength(rest) <= 100) return [prefix, rest];
	}
	throw new Error(`The path ${name} is too long for the backup file.`);
}

/**
 * @param {Entry[]} entries
 * @returns {Buffer} the gzip-compressed tar
 */
export function packArchive(entries) {
	/** @type {Buffer[]} */
	const parts = [];
	for (const { name, data, mtime = new Date() } of entries) {
		const header = Buffer.alloc(512);
		const [prefix, short] = splitName(name);
		header.write(short, 0, 100, 'utf8');
		octal(header, 100, 8, 0o600);
		octal(header, 108, 8, 0);
		octal(header, 116, 8, 0);
		octal(header, 124, 12, data.length);
		octal(header, 136, 12, Math.floor(mtime.getTime() / 1000));
		header.write(' '.repeat(8), 148, 8, 'ascii');
		header.write('0', 156, 1, 'ascii');
		header.write('ustar\0' + '00', 257, 8, 'ascii');
		header.write(prefix, 345, 155, 'utf8');
		let sum = 0;
		for (const byte of header) sum += byte;
		header.write(sum.toString(8).padStart(6, '0') + '\0 ', 148, 8, 'ascii');
		parts.push(header, data);
		const pad = (512 - (data.length % 512)) % 512;
		if (pad) parts.push(Buffer.alloc(pad));
	}
	parts.push(Buffer.alloc(1024));
	return gzipSync(Buffer.concat(parts));
}

/** @param {Buffer} block @param {number} offset @param {number} length */
function text(block, offset, length) {
	const raw = block.subarray(offset, offset + length);
	const end = raw.indexOf(0);
	return raw.subarray(0, end === -1 ? length : end).toString('utf8');
}

/**
 * Reads a backup file's entries. Refuses paths that would leave the folder they are restored
 * into (absolute, or with `..`), and anything but regular files.
 * @param {Buffer} gz
 * @returns {Map<string, Buffer>}
 */
export function unpackArchive(gz) {
	let tar;
	try {
		tar = gunzipSync(gz);
	} catch {
		throw new Error('it is not a gzip-compressed file');
	}
	/** @type {Map<string, Buffer>} */
	const entries = new Map();
	let offset = 0;
	while (offset + 512 <= tar.length) {
		const header = tar.subarray(offset, offset + 512);
		if (header.every((byte) => byte === 0)) break;
		let sum = 0;
		for (let i = 0; i < 512; i++) sum += i >= 148 && i < 156 ? 32 : header[i];
		if (Number.parseInt(text(header, 148, 8).trim(), 8) !== sum) {
			throw new Error(`it is damaged (bad header at byte ${offset})`);
		}
		const prefix = text(header, 345, 155);
		const name = (prefix ? `${prefix}/` : '') + text(header, 0, 100);
		const length = Number.parseInt(text(header, 124, 12).trim() || '0', 8);
		const type = String.fromCharCode(header[156] || 48);
		const start = offset + 512;
		if (start + length > tar.length) throw new Error('it is cut short');
		offset = start + Math.ceil(length / 512) * 512;
		if (type === '5') continue;
		if (type !== '0') throw new Error(`it holds ${name}, which is not a regular file`);
		const normal = posix.normalize(name);
		if (normal.startsWith('/') || normal === '..' || normal.startsWith('../')) {
			throw new Error(`it holds a path outside its folder (${name})`);
		}
		entries.set(normal, tar.subarray(start, start + length));
	}
	return entries;
}

/**
 * The manifest of a backup, checked.
 * @param {Map<string, Buffer>} entries
 * @returns {Manifest}
 */
export function readManifest(entries) {
	const raw = entries.get(MANIFEST);
	if (!raw) throw new Error(`it has no ${MANIFEST}: it was not made by npm run backup`);
	/** @type {Manifest} */
	const manifest = JSON.parse(raw.toString('utf8'));
	if (manifest.format !== 'tideward-backup' || manifest.version !== 1) {
		throw new Error(`its ${MANIFEST} is not a Tideward backup manifest of version 1`);
	}
	if (!entries.has(manifest.database === 'pglite' ? PGLITE_DUMP : PG_DUMP)) {
		throw new Error(`its database dump is missing`);
	}
	return manifest;
}

/** @param {string} path */
export function isDirectory(path) {
	return existsSync(path) && statSync(path).isDirectory();
}
