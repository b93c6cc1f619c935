import { randomUUID } from 'node:crypto';
import { mailFrom } from '../config';
import type { Executor } from '../db';
import { outbox } from '../db/schema';

export interface OutgoingMail {
	/** Unique per (cause, recipient): a second enqueue with the same key is ignored. */
	dedupeKey: string;
	/** 'transactional' mail is always sent; other categories are updates a supporter can refuse. */
	category: string;
	to: string;
	subject: string;
	html: string;
	text: string;
	headers?: Record<string, string>;
	/** The patient event a supporter update is sent for. */
	patientEventId?: number;
}

/**
 * Queues a message in the same transaction as the change that causes it. The outbox worker
 * sends it later; nothing is sent if the transaction rolls back. Returns false when a message
 * with this dedupe key was queued before.
 */
export async function enqueueMail(tx: Executor, mail: OutgoingMail): Promise<boolean> {
	const rows = await tx
		.insert(outbox)
		.values({
			dedupeKey: mail.dedupeKey,
			category: mail.category,
			toAddress: mail.to,
			subject: mail.subject,
			html: mail.html,
			text: mail.text,
			headers: mail.headers ?? {},
			patientEventId: mail.patientEventId ?? null,
			messageId: newMessageId()
		})
		.onConflictDoNothing({ target: outbox.dedupeKey })
		.returning({ id: outbox.id });
	return rows.length > 0;
}

/**
 * A Message-ID on the sender's own domain, fixed when the row is queued so that every attempt
 * sends the same ID and a repeat after a crash can be recognised as a copy.
 */
export function newMessageId(from: string = mailFrom()): string {
	const domain = /@([^\s>@]+)>?\s*$/.exec(from)?.[1] ?? 'tideward.test';
	return `<${randomUUID()}@${domain}>`;
}
