// Turning patient events into supporter updates. Each event is claimed by one instance at a time
// (a lease on the row, renewed as it goes), its recipients are worked through in chunks, and every
// message is queued with the key `update:<event>:<address>`: a crash or a second instance can
// only repeat work, never a message. The event is marked done once every chunk is queued.
import { and, asc, eq, gt, isNotNull, isNull, lt, or, sql } from 'drizzle-orm';
import { appOrigin } from '../config';
import { db, type Executor } from '../db';
import { outbox, patientEvents } from '../db/schema';
import { newMessageId } from '../mail/outbox';
import { organisationVars, renderEmail } from '../mail/templates';
import { kickOutbox } from '../mail/worker';
import { getOrganisationSettings } from '../settings';
import { CATEGORY_OF, composeEvent, reasonFor, TEMPLATE_OF } from './compose';
import { recipientsFor } from './recipients';
import { signingKey, unsubscribeToken } from './tokens';

export const FANOUT_DEFAULTS = {
	chunkSize: 250,
	leaseMs: 2 * 60_000,
	eventsPerRun: 20,
	/** News this old is not sent (after a long outage, or events from before updates existed). */
	maxAgeDays: 14
} as const;

export interface FanOutResult {
	events: number;
	queued: number;
	/** Why nothing was sent, when something stops all updates. */
	blocked?: 'postal-address';
}

/** Updates may not go out without the organisation's postal address (CAN-SPAM). */
export async function updatesBlocked(executor: Executor = db()) {
	const settings = await getOrganisationSettings(executor);
	return settings.postalAddress.trim() === '' ? ('postal-address' as const) : null;
}

type PatientEvent = typeof patientEvents.$inferSelect;

const leaseUntil = (ms: number) =>
	sql`now() + ${Math.round(ms)}::integer * interval '1 millisecond'`;

/** Takes (or renews) the lease on an event; false when another instance holds it or it is done. */
async function claim(eventId: number, leaseMs: number): Promise<boolean> {
	const rows = await db()
		.update(patientEvents)
		.set({ claimedUntil: leaseUntil(leaseMs) })
		.where(
			and(
				eq(patientEvents.id, eventId),
				isNull(patientEvents.processedAt),
				or(isNull(patientEvents.claimedUntil), lt(patientEvents.claimedUntil, sql`now()`))
			)
		)
		.returning({ id: patientEvents.id });
	return rows.length > 0;
}

async function renew(eventId: number, leaseMs: number) {
	await db()
		.update(patientEvents)
		.set({ claimedUntil: leaseUntil(leaseMs) })
		.where(and(eq(patientEvents.id, eventId), isNull(patientEvents.processedAt)));
}

async function finish(eventId: number, outcome: string, recipientCount: number) {
	await db()
		.update(patientEvents)
		.set({ processedAt: new Date(), outcome, recipientCount, claimedUntil: null })
		.where(and(eq(patientEvents.id, eventId), isNull(patientEvents.processedAt)));
}

/** Events ready to go out, oldest first: a last signal waits for the staff's note. */
export async function pendingEvents(limit: number) {
	return db()
		.select()
		.from(patientEvents)
		.where(
			and(
				isNull(patientEvents.processedAt),
				or(sql`${patientEvents.kind} <> 'last_signal'`, isNotNull(patientEvents.approvedAt))
			)
		)
		.orderBy(asc(patientEvents.id))
		.limit(limit);
}

export interface FanOutOptions {
	chunkSize?: number;
	leaseMs?: number;
	/** Called after each chunk is committed (tests use it to stop "mid-send"). */
	afterChunk?: (queuedSoFar: number) => Promise<void> | void;
}

/** Fans one event out; returns how many messages this call queued (repeats queue nothing). */
export async function fanOutEvent(event: PatientEvent, options: FanOutOptions = {}) {
	const chunkSize = options.chunkSize ?? FANOUT_DEFAULTS.chunkSize;
	const leaseMs = options.leaseMs ?? FANOUT_DEFAULTS.leaseMs;
	if (!(await claim(event.id, leaseMs))) return 0;

	if (Date.now() - event.occurredAt.getTime() > FANOUT_DEFAULTS.maxAgeDays * 86_400_000) {
		await finish(event.id, `withheld: older than ${FANOUT_DEFAULTS.maxAgeDays} days`, 0);
		return 0;
	}

	// Several steps crossed in one upload: only the latest is announced.
	if (event.kind === 'waypoint') {
		const [later] = await db()
			.select({ id: patientEvents.id })
			.from(patientEvents)
			.where(
				and(
					eq(patientEvents.patientId, event.patientId),
					eq(patientEvents.kind, 'waypoint'),
					gt(patientEvents.id, event.id)
				)
			)
			.limit(1);
		if (later) {
			await finish(event.id, 'superseded', 0);
			return 0;
		}
	}

	const origin = appOrigin();
	const settings = await getOrganisationSettings();
	const composed = await composeEvent(db(), event, origin, settings.distanceUnit);
	if (!composed.send) {
		await finish(event.id, `withheld: ${composed.reason}`, 0);
		return 0;
	}
	const category = CATEGORY_OF[event.kind];
	const template = TEMPLATE_OF[event.kind];
	const recipients = await recipientsFor(db(), event.patientId, category);
	const common = await organisationVars(db());
	const key = await signingKey();

	let queued = 0;
	for (let start = 0; start < recipients.length; start += chunkSize) {
		const chunk = recipients.slice(start, start + chunkSize);
		const rows: (typeof outbox.$inferInsert)[] = [];
		for (const recipient of chunk) {
			const token = unsubscribeToken(key, { email: recipient.email, category });
			const unsubscribeLink = `${origin}/api/unsubscribe/${token}`;
			const mail = await renderEmail(template, {
				...common,
				...composed.vars,
				name: recipient.name,
				reason: reasonFor(recipient, category, composed.patientName),
				unsubscribeLink,
				preferencesLink: `${origin}/preferences/${token}`
			} as never);
			rows.push({
				dedupeKey: `update:${event.id}:${recipient.email}`,
				category,
				toAddress: recipient.email,
				subject: mail.subject,
				html: mail.html,
				text: mail.text,
				// RFC 8058: a one-click unsubscribe by POST to an HTTPS URL that names the list itself.
				headers: {
					'List-Unsubscribe': `<${unsubscribeLink}>`,
					'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click'
				},
				patientEventId: event.id,
				messageId: newMessageId()
			});
		}
		const inserted = await db().transaction(async (tx) =>
			tx
				.insert(outbox)
				.values(rows)
				.onConflictDoNothing({ target: outbox.dedupeKey })
				.returning({ id: outbox.id })
		);
		queued += inserted.length;
		await renew(event.id, leaseMs);
		kickOutbox();
		await options.afterChunk?.(start + chunk.length);
	}
	await finish(event.id, 'sent', recipients.length);
	return queued;
}

/** One run of the fan-out: the oldest ready events, unless updates are blocked. */
export async function fanOutPending(options: FanOutOptions = {}): Promise<FanOutResult> {
	const blocked = await updatesBlocked();
	if (blocked) return { events: 0, queued: 0, blocked };
	let events = 0;
	let queued = 0;
	for (const event of await pendingEvents(FANOUT_DEFAULTS.eventsPerRun)) {
		queued += await fanOutEvent(event, options);
		events++;
	}
	if (queued) kickOutbox();
	return { events, queued };
}
