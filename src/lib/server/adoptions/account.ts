// A supporter's own adoptions and gifts, for the account page.
import { and, desc, eq, inArray, or } from 'drizzle-orm';
import { db } from '../db';
import { adoptionLevels, adoptions, gifts, patients, users } from '../db/schema';

/**
 * Adoptions the account made or received: by account, or by e-mail address when the account's
 * address is verified (adoptions made before signing up).
 */
export async function accountAdoptions(userId: string) {
	const [user] = await db()
		.select({ email: users.email, verified: users.emailVerified })
		.from(users)
		.where(eq(users.id, userId));
	if (!user) return [];
	const mine = or(
		eq(adoptions.supporterId, userId),
		eq(adoptions.recipientId, userId),
		...(user.verified
			? [eq(adoptions.supporterEmail, user.email), eq(adoptions.recipientEmail, user.email)]
			: [])
	);
	const rows = await db()
		.select({
			id: adoptions.id,
			kind: adoptions.kind,
			status: adoptions.status,
			interval: adoptions.interval,
			amountCents: adoptions.amountCents,
			currency: adoptions.currency,
			startedAt: adoptions.startedAt,
			endedAt: adoptions.endedAt,
			cancelAt: adoptions.cancelAt,
			levelId: adoptions.levelId,
			recipientName: adoptions.recipientName,
			supporterEmail: adoptions.supporterEmail,
			patientName: patients.name,
			patientSlug: patients.slug,
			levelName: adoptionLevels.name
		})
		.from(adoptions)
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.innerJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(and(mine, inArray(adoptions.status, ['active', 'ended', 'cancelled'])))
		.orderBy(desc(adoptions.createdAt));
	const payments = rows.length
		? await db()
				.select({
					adoptionId: gifts.adoptionId,
					status: gifts.status,
					amountCents: gifts.amountCents,
					refundedCents: gifts.refundedCents,
					paidAt: gifts.paidAt
				})
				.from(gifts)
				.where(
					inArray(
						gifts.adoptionId,
						rows.map((r) => r.id)
					)
				)
				.orderBy(desc(gifts.paidAt))
		: [];
	return rows.map((row) => ({
		...row,
		receivedAsGift: row.kind === 'gift' && row.supporterEmail !== user.email,
		payments: payments.filter((p) => p.adoptionId === row.id)
	}));
}

/** The processor's customer id of an adoption, once its payment is confirmed. */
export async function adoptionCustomer(adoptionId: string): Promise<string | null> {
	const [row] = await db()
		.select({ customerId: adoptions.customerId })
		.from(adoptions)
		.where(eq(adoptions.id, adoptionId));
	return row?.customerId ?? null;
}
