// Adoptions given as gifts: the recipient's notice on the delivery date, and the link with which
// the recipient keeps the adoption in an account of their own.
import { encodeBase32LowerCaseNoPadding } from '@oslojs/encoding';
import { and, eq, isNotNull, isNull, lte, or } from 'drizzle-orm';
import { hashToken } from '../auth/tokens';
import { appOrigin } from '../config';
import { db, type Executor } from '../db';
import { adoptionLevels, adoptions, patients } from '../db/schema';
import { enqueueMail } from '../mail/outbox';
import { organisationVars, renderEmail } from '../mail/templates';
import { kickOutbox } from '../mail/worker';

/** Today's date (UTC) as YYYY-MM-DD: delivery dates are compared with it. */
export const utcDay = (at: Date) => at.toISOString().slice(0, 10);

const due = (at: Date) =>
	and(
		eq(adoptions.kind, 'gift'),
		eq(adoptions.status, 'active'),
		isNull(adoptions.giftNotifiedAt),
		isNotNull(adoptions.recipientEmail),
		or(isNull(adoptions.deliverOn), lte(adoptions.deliverOn, utcDay(at)))
	);

/**
 * Sends the gift notice of one adoption if it is due (active, not yet sent, delivery date today or
 * past). Runs inside the caller's transaction: the notice is queued with the change that makes it
 * due, and the conditional update makes it once-only however often it is called.
 */
export async function notifyGiftIfDue(tx: Executor, adoptionId: string, at = new Date()) {
	const token = encodeBase32LowerCaseNoPadding(crypto.getRandomValues(new Uint8Array(20)));
	const [claimed] = await tx
		.update(adoptions)
		.set({ giftNotifiedAt: at, claimTokenHash: hashToken(token), updatedAt: at })
		.where(and(eq(adoptions.id, adoptionId), due(at)))
		.returning({
			recipientName: adoptions.recipientName,
			recipientEmail: adoptions.recipientEmail,
			supporterName: adoptions.supporterName,
			giftMessage: adoptions.giftMessage,
			patientId: adoptions.patientId
		});
	if (!claimed?.recipientEmail) return false;
	const [patient] = await tx
		.select({ name: patients.name, slug: patients.slug })
		.from(patients)
		.where(eq(patients.id, claimed.patientId));
	const origin = appOrigin();
	const mail = await renderEmail('gift-notice', {
		...(await organisationVars(tx)),
		recipientName: claimed.recipientName ?? 'friend',
		giverName: claimed.supporterName,
		patientName: patient.name,
		giftMessage: claimed.giftMessage
			? `${claimed.supporterName} wrote: “${claimed.giftMessage}”`
			: '',
		claimLink: `${origin}/gifts/${token}`,
		patientLink: `${origin}/patients/${patient.slug}`
	});
	await enqueueMail(tx, {
		dedupeKey: `gift-notice:${adoptionId}`,
		category: 'transactional',
		to: claimed.recipientEmail,
		...mail
	});
	return true;
}

/** Sends every gift notice whose delivery date has come; the scheduler runs it. */
export async function deliverDueGiftNotices(at = new Date()): Promise<number> {
	const rows = await db().select({ id: adoptions.id }).from(adoptions).where(due(at));
	let sent = 0;
	for (const { id } of rows) {
		if (await db().transaction((tx) => notifyGiftIfDue(tx, id, at))) sent++;
	}
	if (sent) kickOutbox();
	return sent;
}

/** The gift a claim link opens, or null for an unknown link. */
export async function giftForClaim(token: string) {
	const [row] = await db()
		.select({
			id: adoptions.id,
			status: adoptions.status,
			recipientName: adoptions.recipientName,
			recipientId: adoptions.recipientId,
			supporterName: adoptions.supporterName,
			giftMessage: adoptions.giftMessage,
			interval: adoptions.interval,
			patientName: patients.name,
			patientSlug: patients.slug,
			levelName: adoptionLevels.name
		})
		.from(adoptions)
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.innerJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(and(eq(adoptions.claimTokenHash, hashToken(token)), eq(adoptions.kind, 'gift')));
	return row ?? null;
}

export type ClaimOutcome = 'claimed' | 'already-yours' | 'taken' | 'unknown';

/**
 * Puts a gift into the signed-in account. One conditional update, so two accounts racing with
 * the same link cannot both get it.
 */
export async function claimGift(token: string, userId: string): Promise<ClaimOutcome> {
	const gift = await giftForClaim(token);
	if (!gift) return 'unknown';
	if (gift.recipientId === userId) return 'already-yours';
	const updated = await db()
		.update(adoptions)
		.set({ recipientId: userId, updatedAt: new Date() })
		.where(and(eq(adoptions.id, gift.id), isNull(adoptions.recipientId)))
		.returning({ id: adoptions.id });
	return updated.length ? 'claimed' : 'taken';
}
