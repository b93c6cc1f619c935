// What staff see of the outbox and what they may do to it: counts, the latest supporter-update
// events with the fate of their messages, one page of messages, and sending failed ones again.
// Message bodies (html, text) are never read here: staff see who, what subject and what happened.
import { and, count, desc, eq, inArray, sql } from 'drizzle-orm';
import type { Executor } from '../db';
import { OUTBOX_STATUSES, outbox, patientEvents, patients, type OutboxStatus } from '../db/schema';
import { formatUtc } from './mailbox';

export const OUTBOX_PAGE_SIZE = 50;
/** Patient events listed on the page, newest first. */
export const RECENT_EVENTS = 20;
/** Long SMTP replies are cut for the list; the row keeps the whole text. */
const ERROR_SHOWN = 300;

export type StatusCounts = Record<OutboxStatus, number>;

const noCounts = (): StatusCounts => ({ pending: 0, sent: 0, failed: 0 });

export function isOutboxStatus(value: string | null | undefined): value is OutboxStatus {
	return (OUTBOX_STATUSES as readonly string[]).includes(value ?? '');
}

/** How many messages are in each state, all of them counted. */
export async function outboxCounts(executor: Executor): Promise<StatusCounts> {
	const rows = await executor
		.select({ status: outbox.status, n: count() })
		.from(outbox)
		.groupBy(outbox.status);
	const counts = noCounts();
	for (const row of rows) counts[row.status] = row.n;
	return counts;
}

/** The latest patient events, each with its messages counted by state. */
export async function recentEventsWithCounts(executor: Executor, limit = RECENT_EVENTS) {
	const events = await executor
		.select({
			id: patientEvents.id,
			kind: patientEvents.kind,
			patientName: patients.name,
			occurredAt: patientEvents.occurredAt,
			processedAt: patientEvents.processedAt,
			outcome: patientEvents.outcome,
			recipientCount: patientEvents.recipientCount
		})
		.from(patientEvents)
		.innerJoin(patients, eq(patients.id, patientEvents.patientId))
		.orderBy(desc(patientEvents.occurredAt), desc(patientEvents.id))
		.limit(limit);
	if (events.length === 0) return [];

	const grouped = await executor
		.select({ eventId: outbox.patientEventId, status: outbox.status, n: count() })
		.from(outbox)
		.where(
			inArray(
				outbox.patientEventId,
				events.map((e) => e.id)
			)
		)
		.groupBy(outbox.patientEventId, outbox.status);
	const byEvent = new Map<number, StatusCounts>();
	for (const row of grouped) {
		if (row.eventId === null) continue;
		const counts = byEvent.get(row.eventId) ?? noCounts();
		counts[row.status] = row.n;
		byEvent.set(row.eventId, counts);
	}
	return events.map((e) => ({
		id: e.id,
		kind: e.kind,
		patientName: e.patientName,
		occurredOn: e.occurredAt.toISOString().slice(0, 10),
		processed: e.processedAt !== null,
		outcome: e.outcome,
		recipientCount: e.recipientCount,
		messages: byEvent.get(e.id) ?? noCounts()
	}));
}

export interface OutboxListQuery {
	status: OutboxStatus | null;
	page: number;
}

/** One page of messages, newest first, optionally of one state. Never the bodies. */
export async function listOutbox(executor: Executor, query: OutboxListQuery) {
	const where = query.status ? eq(outbox.status, query.status) : undefined;
	const [{ total }] = await executor.select({ total: count() }).from(outbox).where(where);
	const rows = await executor
		.select({
			id: outbox.id,
			toAddress: outbox.toAddress,
			subject: outbox.subject,
			category: outbox.category,
			status: outbox.status,
			attempts: outbox.attempts,
			lastError: outbox.lastError,
			patientEventId: outbox.patientEventId,
			createdAt: outbox.createdAt,
			sentAt: outbox.sentAt
		})
		.from(outbox)
		.where(where)
		.orderBy(desc(outbox.id))
		.limit(OUTBOX_PAGE_SIZE)
		.offset((query.page - 1) * OUTBOX_PAGE_SIZE);
	return {
		total,
		pageCount: Math.max(1, Math.ceil(total / OUTBOX_PAGE_SIZE)),
		messages: rows.map((r) => ({
			id: r.id,
			to: r.toAddress,
			subject: r.subject,
			category: r.category,
			status: r.status,
			attempts: r.attempts,
			lastError:
				r.lastError && r.lastError.length > ERROR_SHOWN
					? `${r.lastError.slice(0, ERROR_SHOWN)}…`
					: r.lastError,
			patientEventId: r.patientEventId,
			createdAt: r.createdAt.toISOString(),
			createdLabel: formatUtc(r.createdAt),
			sentAt: r.sentAt?.toISOString() ?? null,
			sentLabel: r.sentAt ? formatUtc(r.sentAt) : null
		}))
	};
}

// Back in the queue, due now by the database's clock (the one the worker's due check reads) and
// unclaimed. The attempts and the last error stay, so staff and the worker's give-up rule still
// see the history: a retried row that fails again is given up at once unless the failure is a
// temporary one and attempts remain.
const requeue = () => ({
	status: 'pending' as const,
	nextAttemptAt: sql`now()`,
	lockedUntil: null
});

export type RetryOutcome =
	| { retried: true }
	| { retried: false; reason: 'not-found' }
	| { retried: false; reason: 'not-failed'; status: OutboxStatus };

/** Puts one failed message back in the queue; anything else is refused and left as it was. */
export async function retryFailedMessage(executor: Executor, id: number): Promise<RetryOutcome> {
	const done = await executor
		.update(outbox)
		.set(requeue())
		.where(and(eq(outbox.id, id), eq(outbox.status, 'failed')))
		.returning({ id: outbox.id });
	if (done.length > 0) return { retried: true };
	const [row] = await executor
		.select({ status: outbox.status })
		.from(outbox)
		.where(eq(outbox.id, id));
	return row
		? { retried: false, reason: 'not-failed', status: row.status }
		: { retried: false, reason: 'not-found' };
}

/** Puts every failed message back in the queue; returns how many. */
export async function retryAllFailed(executor: Executor): Promise<number> {
	const done = await executor
		.update(outbox)
		.set(requeue())
		.where(eq(outbox.status, 'failed'))
		.returning({ id: outbox.id });
	return done.length;
}
