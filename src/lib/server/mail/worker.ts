import { and, asc, eq, inArray, isNull, lt, lte, or, sql } from 'drizzle-orm';
import type { NodemailerError } from 'nodemailer';
import { mailFrom } from '../config';
import { db as openDb, type Database } from '../db';
import { outbox } from '../db/schema';
import { mailTransport, type MailTransport } from './transport';
import { log } from '$lib/server/log';

export interface OutboxRunOptions {
	database?: Database;
	transport?: MailTransport;
	from?: string;
	/** Rows claimed per run. */
	batchSize?: number;
	/** How long a claim lasts; a worker that dies mid-batch frees its rows after this. */
	leaseMs?: number;
	/** A row that has failed this many times is given up as `failed`. */
	maxAttempts?: number;
	random?: () => number;
}

export interface OutboxRunResult {
	claimed: number;
	sent: number;
	/** Failed for a reason that may pass, and scheduled again. */
	retrying: number;
	failed: number;
	/** Claimed, but another worker took the row over before this one got to it. */
	skipped: number;
}

export const OUTBOX_DEFAULTS = {
	batchSize: 10,
	leaseMs: 2 * 60_000,
	maxAttempts: 8,
	baseDelayMs: 30_000,
	maxDelayMs: 60 * 60_000
} as const;

/**
 * Wait before the next try after `attempts` failed ones: doubling from 30 s up to an hour,
 * with "equal jitter" (half fixed, half random) so many failed rows do not retry in lockstep.
 */
export function retryDelayMs(attempts: number, random: () => number = Math.random): number {
	const ceiling = Math.min(
		OUTBOX_DEFAULTS.maxDelayMs,
		OUTBOX_DEFAULTS.baseDelayMs * 2 ** Math.max(0, attempts - 1)
	);
	return Math.round(ceiling / 2 + random() * (ceiling / 2));
}

/** True when the same message could go through later: 4xx replies and broken connections. */
export function isTransient(error: unknown): boolean {
	const e = error as NodemailerError;
	if (typeof e?.permanent === 'boolean') return !e.permanent;
	if (typeof e?.responseCode === 'number') {
		return e.responseCode < 500 || e.responseCode === 503;
	}
	// No SMTP reply at all: nodemailer refused the message itself (no valid recipient, bad
	// configuration) or the connection failed. Only the latter can pass.
	return !['EENVELOPE', 'ECONFIG', 'EMESSAGE'].includes(e?.code ?? '');
}

function describe(error: unknown): string {
	const e = error as NodemailerError;
	const text = e?.response ?? e?.message ?? String(error);
	return [e?.code, text].filter(Boolean).join(': ').slice(0, 2000);
}

// Truncated to milliseconds so the value read back into a JS Date compares equal: the lease
// time doubles as the claim's token.
function leaseUntil(leaseMs: number) {
	return sql<Date>`date_trunc('milliseconds', now() + ${Math.round(leaseMs)}::integer * interval '1 millisecond')`;
}

/** Claims one batch of due mail, sends it, records each outcome. Safe to run concurrently. */
export async function runOutboxOnce(options: OutboxRunOptions = {}): Promise<OutboxRunResult> {
	const database = options.database ?? openDb();
	const transport = options.transport ?? mailTransport();
	const from = options.from ?? mailFrom();
	const batchSize = options.batchSize ?? OUTBOX_DEFAULTS.batchSize;
	const leaseMs = options.leaseMs ?? OUTBOX_DEFAULTS.leaseMs;
	const maxAttempts = options.maxAttempts ?? OUTBOX_DEFAULTS.maxAttempts;
	const random = options.random ?? Math.random;
	const result: OutboxRunResult = { claimed: 0, sent: 0, retrying: 0, failed: 0, skipped: 0 };

	const due = database
		.select({ id: outbox.id })
		.from(outbox)
		.where(
			and(
				eq(outbox.status, 'pending'),
				lte(outbox.nextAttemptAt, sql`now()`),
				or(isNull(outbox.lockedUntil), lt(outbox.lockedUntil, sql`now()`))
			)
		)
		.orderBy(asc(outbox.id))
		.limit(batchSize)
		.for('update', { skipLocked: true });
	const claimed = await database
		.update(outbox)
		.set({ lockedUntil: leaseUntil(leaseMs) })
		.where(inArray(outbox.id, due))
		.returning();
	claimed.sort((a, b) => a.id - b.id);
	result.claimed = claimed.length;

	for (const row of claimed) {
		// Renew the claim just before sending: a batch may outlast one lease, and a row whose
		// lease ran out may already belong to another worker.
		const [renewed] = await database
			.update(outbox)
			.set({ lockedUntil: leaseUntil(leaseMs) })
			.where(
				and(
					eq(outbox.id, row.id),
					eq(outbox.status, 'pending'),
					eq(outbox.lockedUntil, row.lockedUntil as Date)
				)
			)
			.returning({ lockedUntil: outbox.lockedUntil });
		if (!renewed?.lockedUntil) {
			result.skipped++;
			continue;
		}
		const token = renewed.lockedUntil;

		try {
			await transport.sendMail({
				from,
				to: row.toAddress,
				subject: row.subject,
				html: row.html,
				text: row.text,
				headers: row.headers,
				messageId: row.messageId,
				date: row.createdAt
			});
		} catch (error) {
			const attempts = row.attempts + 1;
			const giveUp = !isTransient(error) || attempts >= maxAttempts;
			await database
				.update(outbox)
				.set({
					status: giveUp ? 'failed' : 'pending',
					attempts,
					lastError: describe(error),
					lockedUntil: null,
					nextAttemptAt: giveUp
						? sql`now()`
						: sql`now() + ${retryDelayMs(attempts, random)}::integer * interval '1 millisecond'`
				})
				.where(and(eq(outbox.id, row.id), eq(outbox.lockedUntil, token)));
			if (giveUp) result.failed++;
			else result.retrying++;
			continue;
		}

		// Not conditional on the lease: the message is out, whoever holds the row now.
		await database
			.update(outbox)
			.set({
				status: 'sent',
				attempts: sql`${outbox.attempts} + 1`,
				sentAt: sql`now()`,
				lockedUntil: null,
				lastError: null
			})
			.where(and(eq(outbox.id, row.id), eq(outbox.status, 'pending')));
		result.sent++;
	}
	return result;
}

export interface OutboxWorkerOptions extends OutboxRunOptions {
	intervalMs?: number;
}

interface WorkerState {
	timer?: NodeJS.Timeout;
	running?: Promise<void>;
	again: boolean;
	stopped: boolean;
	intervalMs: number;
	batchSize: number;
	run: () => Promise<OutboxRunResult>;
}

// On globalThis so a `vite dev` reload of this module finds the loop already running.
const holder = globalThis as typeof globalThis & { __tidewardOutboxWorker?: WorkerState };

function schedule(state: WorkerState, delayMs: number): void {
	if (state.stopped) return;
	clearTimeout(state.timer);
	state.timer = setTimeout(() => tick(state), delayMs);
	state.timer.unref();
}

function tick(state: WorkerState): void {
	if (state.stopped) return;
	if (state.running) {
		state.again = true;
		return;
	}
	clearTimeout(state.timer);
	state.again = false;
	let full = false;
	state.running = state
		.run()
		.then((result) => {
			full = result.claimed >= state.batchSize;
		})
		.catch((error: unknown) => log().error({ err: error }, 'outbox worker failed'))
		.finally(() => {
			state.running = undefined;
			// A full batch or a kick during the run means more may be due right now.
			schedule(state, full || state.again ? 0 : state.intervalMs);
		});
}

/** Starts the background loop (unless MAIL_WORKER=off). Calling it again does nothing. */
export function startOutboxWorker(options: OutboxWorkerOptions = {}): boolean {
	if (process.env.MAIL_WORKER === 'off') return false;
	if (holder.__tidewardOutboxWorker && !holder.__tidewardOutboxWorker.stopped) return true;
	const { intervalMs = 2_000, ...runOptions } = options;
	const state: WorkerState = {
		again: false,
		stopped: false,
		intervalMs,
		batchSize: runOptions.batchSize ?? OUTBOX_DEFAULTS.batchSize,
		run: () => runOutboxOnce(runOptions)
	};
	holder.__tidewardOutboxWorker = state;
	schedule(state, 0);
	return true;
}

/** Wakes the loop now, e.g. right after a transaction that queued mail has committed. */
export function kickOutbox(): void {
	const state = holder.__tidewardOutboxWorker;
	if (!state || state.stopped) return;
	if (state.running) state.again = true;
	else schedule(state, 0);
}

/** Stops the loop; resolves once the batch in progress (if any) has finished. */
export async function stopOutboxWorker(): Promise<void> {
	const state = holder.__tidewardOutboxWorker;
	if (!state) return;
	state.stopped = true;
	clearTimeout(state.timer);
	holder.__tidewardOutboxWorker = undefined;
	await state.running;
}
