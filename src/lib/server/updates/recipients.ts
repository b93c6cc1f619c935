// Who hears about a patient: the people whose adoption of it is current (the payer, the gift's
// recipient once told of the gift, the classroom's teacher), and those whose adoption has ended
// but who chose to keep following. Each address once, and only if it wants this category.
import { and, eq, inArray } from 'drizzle-orm';
import type { Executor } from '../db';
import { adoptions, mailPreferences } from '../db/schema';
import { DEFAULT_PREFERENCES, type UpdateCategory } from '../mail/preferences';

export interface Recipient {
	email: string;
	name: string;
	/** Why this address gets the update, for the footer. */
	relation: 'adopted' | 'gift' | 'classroom' | 'followed';
}

const RANK: Record<Recipient['relation'], number> = {
	adopted: 0,
	gift: 1,
	classroom: 2,
	followed: 3
};

export async function recipientsFor(
	tx: Executor,
	patientId: string,
	category: UpdateCategory
): Promise<Recipient[]> {
	const rows = await tx
		.select({
			kind: adoptions.kind,
			status: adoptions.status,
			supporterEmail: adoptions.supporterEmail,
			supporterName: adoptions.supporterName,
			recipientEmail: adoptions.recipientEmail,
			recipientName: adoptions.recipientName,
			teacherName: adoptions.teacherName,
			giftNotifiedAt: adoptions.giftNotifiedAt
		})
		.from(adoptions)
		.where(
			and(
				eq(adoptions.patientId, patientId),
				inArray(adoptions.status, ['active', 'ended', 'cancelled'])
			)
		);

	const candidates: (Recipient & { current: boolean })[] = [];
	for (const row of rows) {
		const current = row.status === 'active';
		candidates.push({
			email: row.supporterEmail,
			name: row.kind === 'classroom' ? (row.teacherName ?? row.supporterName) : row.supporterName,
			relation: !current ? 'followed' : row.kind === 'classroom' ? 'classroom' : 'adopted',
			current
		});
		// A gift's recipient hears about the patient once told of the gift, not before.
		if (row.kind === 'gift' && row.recipientEmail && row.giftNotifiedAt) {
			candidates.push({
				email: row.recipientEmail,
				name: row.recipientName ?? row.recipientEmail,
				relation: current ? 'gift' : 'followed',
				current
			});
		}
	}

	// One message per address: the closest relation wins.
	const byAddress = new Map<string, Recipient & { current: boolean }>();
	for (const candidate of candidates) {
		const key = candidate.email.trim().toLowerCase();
		const seen = byAddress.get(key);
		if (
			!seen ||
			(candidate.current && !seen.current) ||
			(candidate.current === seen.current && RANK[candidate.relation] < RANK[seen.relation])
		) {
			byAddress.set(key, { ...candidate, email: key });
		}
	}
	if (byAddress.size === 0) return [];

	const preferences = new Map(
		(
			await tx
				.select()
				.from(mailPreferences)
				.where(inArray(mailPreferences.email, [...byAddress.keys()]))
		).map((p) => [p.email, p])
	);
	const result: Recipient[] = [];
	for (const [email, candidate] of byAddress) {
		const chosen = preferences.get(email) ?? DEFAULT_PREFERENCES;
		if (!chosen[category]) continue;
		if (!candidate.current && !chosen.keepFollowing) continue;
		result.push({ email, name: candidate.name, relation: candidate.relation });
	}
	return result.sort((a, b) => a.email.localeCompare(b.email));
}
