// `npm run backup` and `npm run restore` end to end: the scripts run as an operator runs them (a
// child process with DATA_DIR / DATABASE_URL), on a data folder holding the demo scenario, paid
// adoptions, a photo, caught mail and the local payment service's state. What comes back is
// compared with what went in by this file's own queries, not by the scripts' counts.
import { spawn, spawnSync } from 'node:child_process';
import {
	copyFileSync,
	existsSync,
	mkdirSync,
	mkdtempSync,
	readdirSync,
	readFileSync,
	rmSync,
	statSync
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import pg from 'pg';
import sharp from 'sharp';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDatabase, db, openDatabase, pgliteInstance } from '$lib/server/db';
import { caughtMail } from '$lib/server/db/schema';
import { seedDemo } from '$lib/server/db/seed/demo';
import { ensureDemoAdoptions } from '$lib/server/demo-adoptions';
import { storeImage } from '$lib/server/media';
import { startTestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
process.env.ARGON2_TEST_PARAMS = '1';

type Query = (sql: string) => Promise<Record<string, unknown>[]>;

interface Snapshot {
	counts: Record<string, number>;
	sequences: Record<string, string | null>;
	gifts: string;
	photos: string;
	mail: string;
}

/** Row counts of every table, sequence positions, and checksums of the rows that matter most. */
async function snapshot(query: Query): Promise<Snapshot> {
	const counts: Record<string, number> = {};
	const tables = await query(
		`SELECT schemaname, tablename FROM pg_catalog.pg_tables
		 WHERE schemaname NOT IN ('pg_catalog', 'information_schema') ORDER BY 1, 2`
	);
	for (const { schemaname, tablename } of tables) {
		const [row] = await query(`SELECT count(*)::int AS n FROM "${schemaname}"."${tablename}"`);
		counts[`${schemaname}.${tablename}`] = Number(row.n);
	}
	const sequences = Object.fromEntries(
		(await query('SELECT sequencename, last_value::text AS v FROM pg_sequences ORDER BY 1')).map(
			(r) => [String(r.sequencename), r.v === null ? null : String(r.v)]
		)
	);
	// md5 of every column of every row, in primary-key order (PostgreSQL's row-to-text form).
	const sum = async (sql: string) => String((await query(sql))[0].sum);
	return {
		counts,
		sequences,
		gifts: await sum(
			`SELECT md5(coalesce(string_agg(g::text, E'\\n' ORDER BY g.id), '')) AS sum FROM gifts g`
		),
		photos: await sum(
			`SELECT md5(coalesce(string_agg(v::text, E'\\n' ORDER BY media_id, width, format), '')) AS sum
			 FROM media_variants v`
		),
		mail: await sum(
			`SELECT md5(coalesce(string_agg(m::text, E'\\n' ORDER BY m.id), '')) AS sum FROM caught_mail m`
		)
	};
}

function runScript(script: 'backup' | 'restore', args: string[], env: Record<string, string>) {
	return new Promise<{ code: number | null; stdout: string; stderr: string }>((resolve) => {
		const child = spawn(process.execPath, [`scripts/${script}.js`, ...args], {
			env: { ...process.env, DATABASE_URL: '', ...env },
			stdio: ['ignore', 'pipe', 'pipe']
		});
		let stdout = '';
		let stderr = '';
		child.stdout.on('data', (d) => (stdout += d));
		child.stderr.on('data', (d) => (stderr += d));
		child.once('exit', (code) => resolve({ code, stdout, stderr }));
	});
}

const escaped = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');

const backupFiles = (dir: string) =>
	existsSync(dir) ? readdirSync(dir).filter((n) => n.endsWith('.tar.gz')) : [];

/**
 * Fills the open database as a running hospital would: the demo scenario, three adoptions paid
 * through the local payment service (gifts, receipts, outbox), a photo and a caught message.
 * Leaves the payment service's state file in `dataDir`, where the server keeps it.
 */
async function fillDatabase(dataDir: string) {
	const database = db();
	await seedDemo(database);
	mkdirSync(dataDir, { recursive: true });
	const processor = await startTestProcessor('backup');
	try {
		expect(await ensureDemoAdoptions()).toBe(3);
		await processor.fake.flushWebhooks();
		copyFileSync(
			join(processor.fake.dataDir, 'fake-stripe.json'),
			join(dataDir, 'fake-stripe.json')
		);
	} finally {
		await processor.stop();
	}
	const photo = await sharp({
		create: { width: 900, height: 600, channels: 3, background: { r: 20, g: 120, b: 130 } }
	})
		.jpeg()
		.toBuffer();
	await storeImage({ bytes: photo, alt: 'A loggerhead in the pool', uploadedBy: null });
	await database.insert(caughtMail).values({
		messageId: '<backup-test@tideward.test>',
		envelopeFrom: 'no-reply@tideward.test',
		envelopeTo: ['dolores.supporter@tideward.test'],
		subject: 'A field note',
		text: 'Perla ate well today.',
		raw: 'Subject: A field note\r\n\r\nPerla ate well today.'
	});
}

describe('backup and restore of an embedded database (PGlite)', () => {
	let root: string;
	let dataDir: string;
	let restored: string;
	let out: string;
	let before: Snapshot;
	let backupFile: string;

	beforeAll(async () => {
		root = mkdtempSync(join(tmpdir(), 'tideward-backup-test-'));
		[dataDir, restored, out] = ['data', 'restored', 'backups'].map((name) => join(root, name));
		await openDatabase({ dataDir });
		await fillDatabase(dataDir);
		const pglite = pgliteInstance()!;
		before = await snapshot(async (sql) => (await pglite.query(sql)).rows as never);
		// The database stays open: the first test is a backup attempt while the "server" runs.
	}, 180_000);

	afterAll(async () => {
		await closeDatabase();
		if (root) rmSync(root, { recursive: true, force: true });
	});

	it('the data folder holds what a restore must bring back', () => {
		expect(before.counts['public.gifts']).toBe(3);
		expect(before.counts['public.media_variants']).toBeGreaterThan(1);
		expect(before.counts['public.caught_mail']).toBe(1);
		expect(before.counts['public.patients']).toBeGreaterThanOrEqual(8);
		expect(before.counts['drizzle.__drizzle_migrations']).toBeGreaterThan(0);
		expect(existsSync(join(dataDir, 'fake-stripe.json'))).toBe(true);
	});

	it('refuses, in one line, while a server holds the data folder', async () => {
		const run = await runScript('backup', ['--out', out], { DATA_DIR: dataDir });
		expect(run.code).toBe(1);
		expect(run.stderr.trim()).toBe(
			`The data folder ${dataDir} is in use by a running Tideward server (pid ${process.pid}): stop it, run npm run backup, then start it again (an embedded database is copied only while no server writes it).`
		);
		expect(backupFiles(out)).toEqual([]);
	});

	it('backs up the stopped folder into one file', async () => {
		await closeDatabase();
		const run = await runScript('backup', ['--out', out], { DATA_DIR: dataDir });
		expect(run.stderr).toBe('');
		expect(run.code).toBe(0);
		const files = backupFiles(out);
		expect(files).toHaveLength(1);
		expect(files[0]).toMatch(/^tideward-\d{8}-\d{6}\.tar\.gz$/);
		backupFile = join(out, files[0]);
		const tables = Object.keys(before.counts).length;
		const rows = Object.values(before.counts).reduce((a, b) => a + b, 0);
		expect(run.stdout.trim()).toMatch(
			new RegExp(
				`^${escaped(`Backed up the embedded database in ${dataDir} (${tables} tables, ${rows} rows) and 1 other file to ${backupFile} (`)}\\d+(\\.\\d)? [KM]B\\)\\.$`
			)
		);
		// Only its owner may read it: it holds password hashes and the app's secrets.
		expect(statSync(backupFile).mode & 0o077).toBe(0);
		// The backup left the folder as it was, unlocked.
		expect(existsSync(join(dataDir, 'tideward.lock'))).toBe(false);
		// An ordinary tar file: the operator can look inside with the usual tools.
		const listing = spawnSync('tar', ['-tzf', backupFile], { encoding: 'utf8' });
		if (!listing.error) {
			expect(listing.stdout.trim().split('\n')).toEqual([
				'tideward-backup.json',
				'database/pgdata.tar.gz',
				'files/fake-stripe.json'
			]);
		}
	});

	it('restores into a new folder: every table, sequence, gift, photo, message and file', async () => {
		const run = await runScript('restore', [backupFile], { DATA_DIR: restored });
		expect(run.stderr).toBe('');
		expect(run.code).toBe(0);
		expect(run.stdout).toContain(`into ${restored}:`);
		expect(run.stdout).toContain('(every count matches the backup), and fake-stripe.json');
		expect(readdirSync(restored).filter((n) => n.startsWith('.') || n === 'tideward.lock')).toEqual(
			[]
		);
		expect(readFileSync(join(restored, 'fake-stripe.json'))).toEqual(
			readFileSync(join(dataDir, 'fake-stripe.json'))
		);
		// Opened the way the server opens it (lock, migrations: nothing left to apply).
		await openDatabase({ dataDir: restored });
		const pglite = pgliteInstance()!;
		const after = await snapshot(async (sql) => (await pglite.query(sql)).rows as never);
		expect(after).toEqual(before);

		// The comparison notices a difference (one gift's amount changed by a cent).
		await pglite.query(
			'UPDATE gifts SET amount_cents = amount_cents + 1 WHERE id = (SELECT min(id) FROM gifts)'
		);
		const changed = await snapshot(async (sql) => (await pglite.query(sql)).rows as never);
		expect(changed.counts).toEqual(before.counts);
		expect(changed.gifts).not.toBe(before.gifts);
		await closeDatabase();
	});

	it('leaves a folder that holds something alone unless --force', async () => {
		const refused = await runScript('restore', [backupFile], { DATA_DIR: restored });
		expect(refused.code).toBe(1);
		expect(refused.stderr.trim()).toMatch(
			new RegExp(
				`^${escaped(restored)} is not empty \\(\\d+ entries\\): set DATA_DIR to an empty or new folder, or add --force to replace what is there\\.$`
			)
		);
		await openDatabase({ dataDir: restored });
		let pglite = pgliteInstance()!;
		expect((await snapshot(async (sql) => (await pglite.query(sql)).rows as never)).gifts).not.toBe(
			before.gifts
		);
		await closeDatabase();

		const forced = await runScript('restore', [backupFile, '--force'], { DATA_DIR: restored });
		expect(forced.stderr).toBe('');
		expect(forced.code).toBe(0);
		await openDatabase({ dataDir: restored });
		pglite = pgliteInstance()!;
		expect(await snapshot(async (sql) => (await pglite.query(sql)).rows as never)).toEqual(before);
		await closeDatabase();
	});

	it('refuses to restore into a folder a server holds, even with --force', async () => {
		await openDatabase({ dataDir: restored });
		const run = await runScript('restore', [backupFile, '--force'], { DATA_DIR: restored });
		await closeDatabase();
		expect(run.code).toBe(1);
		expect(run.stderr.trim()).toBe(
			`The data folder ${restored} is in use by a running Tideward server (pid ${process.pid}): stop it before restoring into it.`
		);
	});

	it('refuses a file that is not a backup, and a backup of the other kind of database', async () => {
		const notBackup = await runScript('restore', ['package.json'], { DATA_DIR: join(root, 'x') });
		expect(notBackup.code).toBe(1);
		expect(notBackup.stderr.trim()).toBe(
			'package.json cannot be restored: it is not a gzip-compressed file.'
		);
		const wrongKind = await runScript('restore', [backupFile], {
			DATA_DIR: join(root, 'x'),
			DATABASE_URL: 'postgres://tideward@127.0.0.1:1/none'
		});
		expect(wrongKind.code).toBe(1);
		expect(wrongKind.stderr.trim()).toBe(
			`${backupFile} holds an embedded (PGlite) database, but DATABASE_URL is set: unset it to restore into DATA_DIR (${join(root, 'x')}).`
		);
		expect(existsSync(join(root, 'x'))).toBe(false);
	});
});

// The server path needs a PostgreSQL server (DATABASE_URL, with the right to create databases)
// and its client tools; without them it is skipped, and the reason is in its name.
const tools = ['pg_dump', 'pg_restore'].filter(
	(tool) => spawnSync(tool, ['--version']).status !== 0
);
const skipReason = !process.env.DATABASE_URL
	? 'DATABASE_URL is not set'
	: tools.length
		? `${tools.join(' and ')} not installed`
		: '';

describe.skipIf(skipReason !== '')(
	`backup and restore on a PostgreSQL server${skipReason ? ` (skipped: ${skipReason})` : ''}`,
	() => {
		let root: string;
		const names = {
			source: `tideward_backup_src_${process.pid}`,
			target: `tideward_backup_dst_${process.pid}`
		};
		const urlOf = (name: string) => {
			const url = new URL(process.env.DATABASE_URL!);
			url.pathname = `/${name}`;
			return url.toString();
		};
		const admin = () => new pg.Client({ connectionString: process.env.DATABASE_URL });
		async function onServer<T>(url: string, body: (query: Query) => Promise<T>): Promise<T> {
			const client = new pg.Client({ connectionString: url });
			await client.connect();
			try {
				return await body(async (sql) => (await client.query(sql)).rows);
			} finally {
				await client.end();
			}
		}
		let before: Snapshot;

		beforeAll(async () => {
			root = mkdtempSync(join(tmpdir(), 'tideward-backup-pg-test-'));
			const client = admin();
			await client.connect();
			for (const name of Object.values(names)) await client.query(`CREATE DATABASE ${name}`);
			await client.end();
			await closeDatabase();
			await openDatabase({ databaseUrl: urlOf(names.source) });
			await fillDatabase(join(root, 'source'));
			await closeDatabase();
			before = await onServer(urlOf(names.source), snapshot);
		}, 180_000);

		afterAll(async () => {
			await closeDatabase();
			const client = admin();
			await client.connect();
			for (const name of Object.values(names)) {
				await client.query(`DROP DATABASE IF EXISTS ${name} WITH (FORCE)`);
			}
			await client.end();
			if (root) rmSync(root, { recursive: true, force: true });
		});

		it('round-trips through pg_dump and pg_restore into an empty database', async () => {
			const out = join(root, 'backups');
			const backup = await runScript('backup', ['--out', out], {
				DATABASE_URL: urlOf(names.source),
				DATA_DIR: join(root, 'source')
			});
			expect(backup.stderr).toBe('');
			expect(backup.code).toBe(0);
			expect(backup.stdout).toContain('Backed up the PostgreSQL database at DATABASE_URL');
			const [file] = backupFiles(out);
			const listing = spawnSync('tar', ['-tzf', join(out, file)], { encoding: 'utf8' });
			if (!listing.error) expect(listing.stdout).toContain('database/tideward.pgdump');

			const env = { DATABASE_URL: urlOf(names.target), DATA_DIR: join(root, 'target') };
			const restore = await runScript('restore', [join(out, file)], env);
			expect(restore.stderr).toBe('');
			expect(restore.code).toBe(0);
			expect(await onServer(urlOf(names.target), snapshot)).toEqual(before);
			expect(readFileSync(join(root, 'target', 'fake-stripe.json'))).toEqual(
				readFileSync(join(root, 'source', 'fake-stripe.json'))
			);

			const again = await runScript('restore', [join(out, file)], env);
			expect(again.code).toBe(1);
			expect(again.stderr.trim()).toMatch(
				/^The database at DATABASE_URL is not empty \(\d+ tables\): point DATABASE_URL at an empty database, or add --force to replace what is there\.$/
			);
			await onServer(urlOf(names.target), (query) =>
				query('DELETE FROM caught_mail').then(() => undefined)
			);
			const forced = await runScript('restore', [join(out, file), '--force'], env);
			expect(forced.stderr).toBe('');
			expect(forced.code).toBe(0);
			expect(await onServer(urlOf(names.target), snapshot)).toEqual(before);
		});
	}
);
