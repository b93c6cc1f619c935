// Benchmark of supporter updates: one waypoint event fanned out to 10,000 adopters (render +
// queue, `fanOutEvent`) and sent through the outbox worker (`runOutboxOnce` in a loop, pooled
// nodemailer transport), against the same number of copies of one pre-rendered message sent
// through the same worker and transport. Goal: end to end at least half the rate of the copies,
// so rendering is not the bottleneck. Run with `npm run bench:mail`; figures go into
// BENCHMARKS.md. Loopback only: the SMTP server is in this process on 127.0.0.1, by default a
// sink that counts and discards each message; `--catcher` uses the app's catcher instead, which
// parses each message and stores it in the same database.
import { mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { count } from 'drizzle-orm';
import { SMTPServer } from 'smtp-server';
import { closeDatabase, openDatabase } from '../../src/lib/server/db';
import {
	adoptionLevels,
	adoptions,
	caughtMail,
	journeys,
	organisationSettings,
	outbox,
	patientEvents,
	patients
} from '../../src/lib/server/db/schema';
import { startCatcher } from '../../src/lib/server/mail/catcher';
import { newMessageId } from '../../src/lib/server/mail/outbox';
import { createMailTransport } from '../../src/lib/server/mail/transport';
import { OUTBOX_DEFAULTS, runOutboxOnce } from '../../src/lib/server/mail/worker';
import { FANOUT_DEFAULTS, fanOutEvent } from '../../src/lib/server/updates/fanout';

const args = process.argv.slice(2);
const COUNT = Number(
	/^--count=(\d+)$/.exec(args.find((a) => a.startsWith('--count=')) ?? '')?.[1] ?? 10_000
);
const USE_CATCHER = args.includes('--catcher');
const BATCH = OUTBOX_DEFAULTS.batchSize;
const LIMIT_MS = 10 * 60_000;

const fmt = (n: number) => Math.round(n).toLocaleString('en-US');
const mib = (bytes: number) => `${fmt(bytes / 2 ** 20)} MiB`;
const gc = () => (globalThis as { gc?: () => void }).gc?.();

// Bounded: a bench that hangs (a stuck connection, a runaway loop) stops by itself.
setTimeout(() => {
	console.error(`bench:mail did not finish within ${LIMIT_MS / 60_000} minutes`);
	process.exit(1);
}, LIMIT_MS).unref();

/** Peak resident and heap memory, sampled every 50 ms while a measure runs. */
function memoryPeak() {
	let rss = 0;
	let heap = 0;
	const sample = () => {
		const m = process.memoryUsage();
		rss = Math.max(rss, m.rss);
		heap = Math.max(heap, m.heapUsed);
	};
	sample();
	const timer = setInterval(sample, 50);
	return () => {
		clearInterval(timer);
		sample();
		return { rss, heap };
	};
}

process.env.ORIGIN ??= 'https://tideward.example';
const dir = mkdtempSync(join(tmpdir(), 'tideward-bench-mail-'));
const db = await openDatabase({ dataDir: dir, migrationsFolder: 'drizzle' });

// The SMTP server on loopback.
let received = 0;
let closeServer: () => Promise<void>;
let port: number;
if (USE_CATCHER) {
	const catcher = await startCatcher({ database: () => db });
	port = catcher.port;
	closeServer = () => catcher.close();
} else {
	const sink = new SMTPServer({
		logger: false,
		authOptional: true,
		disabledCommands: ['AUTH', 'STARTTLS'],
		disableReverseLookup: true,
		onData(stream, _session, callback) {
			stream.on('end', () => {
				received++;
				callback();
			});
			stream.resume();
		}
	});
	await new Promise<void>((resolve) => sink.listen(0, '127.0.0.1', resolve));
	port = (sink.server.address() as AddressInfo).port;
	closeServer = () => new Promise<void>((resolve) => sink.close(() => resolve()));
}
const transport = createMailTransport({ port });

// The data: an organisation with its postal address, one released patient with a public
// journey, COUNT active adoptions with distinct addresses, one waypoint event.
const PATIENT = 'bench-mail-patient';
const LEVEL = 'bench-mail-level';
await db.insert(organisationSettings).values({
	id: 1,
	displayName: 'Punta Ejemplo Turtle Hospital',
	legalName: 'Punta Ejemplo Turtle Hospital, Inc.',
	postalAddress: '1 Shore Road\nPunta Ejemplo, PR 00000'
});
await db
	.insert(adoptionLevels)
	.values({ id: LEVEL, slug: 'ripple-bench', name: 'Ripple', amountCents: 2500, interval: 'once' });
await db.insert(patients).values({
	id: PATIENT,
	slug: 'marea',
	name: 'Marea',
	species: 'green',
	lifeStage: 'juvenile',
	admittedOn: '2026-03-01',
	admissionReason: 'entanglement',
	status: 'released'
});
await db.insert(journeys).values({
	patientId: PATIENT,
	geojson: { type: 'FeatureCollection', features: [], properties: {} },
	etag: 'bench',
	cutoffDate: '2026-11-25'
});
const addresses = Array.from(
	{ length: COUNT },
	(_, i) => `supporter-${String(i).padStart(5, '0')}@example.test`
);
for (let at = 0; at < COUNT; at += 1000) {
	await db.insert(adoptions).values(
		addresses.slice(at, at + 1000).map((email, i) => ({
			id: `bench-adoption-${at + i}`,
			patientId: PATIENT,
			levelId: LEVEL,
			kind: 'self' as const,
			status: 'active' as const,
			interval: 'once' as const,
			amountCents: 2500,
			currency: 'usd',
			supporterEmail: email,
			supporterName: `Supporter ${at + i}`
		}))
	);
}
const [event] = await db
	.insert(patientEvents)
	.values({
		patientId: PATIENT,
		kind: 'waypoint',
		dedupeKey: 'waypoint:bench',
		payload: { distanceKm: 1012, distanceMi: 629, cutoffDate: '2026-11-25', daysSinceRelease: 40 }
	})
	.returning();

/** Messages the SMTP server took: the sink counts them, the catcher stores them. */
async function delivered(): Promise<number> {
	if (!USE_CATCHER) return received;
	const [{ n }] = await db.select({ n: count() }).from(caughtMail);
	return n;
}

/** Runs the worker until nothing is due; every message must go through. */
async function sendAll(): Promise<number> {
	let sent = 0;
	for (;;) {
		const run = await runOutboxOnce({ database: db, transport, batchSize: BATCH });
		if (run.failed || run.retrying)
			throw new Error(`the worker could not send: ${JSON.stringify(run)}`);
		if (run.claimed === 0) return sent;
		sent += run.sent;
	}
}

// (1) Fan-out (render + queue), then the worker sends everything.
gc();
let stop = memoryPeak();
const t0 = performance.now();
const queued = await fanOutEvent(event);
const t1 = performance.now();
const sent1 = await sendAll();
const t2 = performance.now();
const peak1 = stop();
if (queued !== COUNT || sent1 !== COUNT) {
	throw new Error(`expected ${COUNT} queued and sent, got ${queued} and ${sent1}`);
}
const received1 = await delivered();
if (received1 !== COUNT) throw new Error(`the SMTP server took ${received1} of ${COUNT}`);

// (2) One rendered message copied COUNT times into the outbox (queued before timing), sent
// through the same worker and transport.
const [template] = await db
	.select({
		category: outbox.category,
		subject: outbox.subject,
		html: outbox.html,
		text: outbox.text,
		headers: outbox.headers
	})
	.from(outbox)
	.limit(1);
const bytes = Buffer.byteLength(template.html) + Buffer.byteLength(template.text);
await db.delete(outbox);
if (USE_CATCHER) await db.delete(caughtMail);
received = 0;
gc();
const q0 = performance.now();
for (let at = 0; at < COUNT; at += FANOUT_DEFAULTS.chunkSize) {
	await db.insert(outbox).values(
		addresses.slice(at, at + FANOUT_DEFAULTS.chunkSize).map((to, i) => ({
			...template,
			dedupeKey: `copy:${at + i}`,
			toAddress: to,
			messageId: newMessageId()
		}))
	);
}
const q1 = performance.now();
gc();
stop = memoryPeak();
const t3 = performance.now();
const sent2 = await sendAll();
const t4 = performance.now();
const peak2 = stop();
const received2 = await delivered();
if (sent2 !== COUNT || received2 !== COUNT) {
	throw new Error(`copies: expected ${COUNT} sent and taken, got ${sent2} and ${received2}`);
}

// (3) For the reading: the transport alone, one message after another as the worker sends them,
// without the worker's two row updates around each.
const ALONE = Math.min(1000, COUNT);
const t5 = performance.now();
for (let i = 0; i < ALONE; i++) {
	await transport.sendMail({
		from: 'Tideward <no-reply@tideward.test>',
		to: addresses[i],
		subject: template.subject,
		html: template.html,
		text: template.text,
		headers: template.headers,
		messageId: newMessageId()
	});
}
const aloneMs = performance.now() - t5;

const fanOutMs = t1 - t0;
const endToEndMs = t2 - t0;
const sendMs = t2 - t1;
const copiesMs = t4 - t3;
const queueCopiesMs = q1 - q0;
const rate = (ms: number) => `${fmt((COUNT / ms) * 1000)} messages/s`;
const lines = [
	`| measure | value |`,
	`| --- | --- |`,
	`| SMTP server on 127.0.0.1 | ${USE_CATCHER ? 'the app’s catcher (parses and stores into the same PGlite)' : 'smtp-server sink (counts, discards)'} |`,
	`| messages; worker batch; fan-out chunk | ${fmt(COUNT)}; ${BATCH}; ${FANOUT_DEFAULTS.chunkSize} |`,
	`| one message (html + text) | ${fmt(bytes / 1024)} KiB |`,
	`| (1) fan-out: render + queue | ${fmt(fanOutMs)} ms, ${rate(fanOutMs)} |`,
	`| (1) worker: send what the fan-out queued | ${fmt(sendMs)} ms, ${rate(sendMs)} |`,
	`| (1) end to end: fan-out + send | ${fmt(endToEndMs)} ms, ${rate(endToEndMs)} |`,
	`| (2) queue the copies (before timing) | ${fmt(queueCopiesMs)} ms, ${rate(queueCopiesMs)} |`,
	`| (2) worker: send the copies | ${fmt(copiesMs)} ms, ${rate(copiesMs)} |`,
	`| ratio (1) / (2), messages/s (goal ≥ 0.5) | ${(copiesMs / endToEndMs).toFixed(2)} |`,
	`| (3) transport alone, ${fmt(ALONE)} copies one after another | ${fmt(aloneMs)} ms, ${fmt((ALONE / aloneMs) * 1000)} messages/s |`,
	`| peak resident / heap used during (1) | ${mib(peak1.rss)} / ${mib(peak1.heap)} |`,
	`| peak resident / heap used during (2) | ${mib(peak2.rss)} / ${mib(peak2.heap)} |`,
	`| load average at the end (1 min) | ${loadavg()[0].toFixed(1)} |`
];
console.log(lines.join('\n'));

transport.close();
await closeServer();
await closeDatabase();
rmSync(dir, { recursive: true, force: true });
