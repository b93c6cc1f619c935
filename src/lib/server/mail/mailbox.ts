import { count, desc, eq } from 'drizzle-orm';
import type { Executor } from '../db';
import { caughtMail } from '../db/schema';

export const MAILBOX_PAGE_SIZE = 50;

/** "2026-05-04 09:07 UTC": the same on server and client, whatever their time zones. */
export function formatUtc(date: Date): string {
	return `${date.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

export function pageFromQuery(value: string | null): number {
	const page = Number(value ?? 1);
	return Number.isSafeInteger(page) && page >= 1 ? page : 1;
}

/** One page of caught mail, newest first. */
export async function listCaughtMail(executor: Executor, page: number) {
	const [{ total }] = await executor.select({ total: count() }).from(caughtMail);
	const rows = await executor
		.select({
			id: caughtMail.id,
			envelopeTo: caughtMail.envelopeTo,
			subject: caughtMail.subject,
			receivedAt: caughtMail.receivedAt
		})
		.from(caughtMail)
		.orderBy(desc(caughtMail.receivedAt), desc(caughtMail.id))
		.limit(MAILBOX_PAGE_SIZE)
		.offset((page - 1) * MAILBOX_PAGE_SIZE);
	return {
		total,
		pageCount: Math.max(1, Math.ceil(total / MAILBOX_PAGE_SIZE)),
		messages: rows.map((r) => ({
			id: r.id,
			to: r.envelopeTo.join(', '),
			subject: r.subject,
			receivedAt: r.receivedAt.toISOString(),
			receivedLabel: formatUtc(r.receivedAt)
		}))
	};
}

export async function getCaughtMail(executor: Executor, id: number) {
	const [row] = await executor.select().from(caughtMail).where(eq(caughtMail.id, id));
	if (!row) return undefined;
	return {
		id: row.id,
		messageId: row.messageId,
		envelopeFrom: row.envelopeFrom,
		envelopeTo: row.envelopeTo,
		subject: row.subject,
		headers: Object.entries(row.headers),
		text: row.text,
		html: row.html,
		raw: row.raw,
		receivedAt: row.receivedAt.toISOString(),
		receivedLabel: formatUtc(row.receivedAt)
	};
}
