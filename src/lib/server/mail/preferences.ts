// Which supporter updates an e-mail address receives. Kept by address, so a gift's recipient or a
// supporter without an account has preferences too; an address with no row gets every update.
// Transactional mail (receipts, gift notices, sign-in links) does not look here: it is always sent.
import { eq, sql } from 'drizzle-orm';
import { z } from 'zod';
import type { Executor } from '../db';
import { mailPreferences } from '../db/schema';

export const UPDATE_CATEGORIES = ['homecoming', 'waypoint', 'fieldNote', 'lastSignal'] as const;
export type UpdateCategory = (typeof UPDATE_CATEGORIES)[number];

export const CATEGORY_LABELS: Record<UpdateCategory, { label: string; hint: string }> = {
	homecoming: {
		label: 'Homecoming updates',
		hint: 'When a patient you follow is released back to the sea.'
	},
	waypoint: {
		label: 'Waypoint updates',
		hint: 'When a released patient’s public journey crosses another distance step.'
	},
	fieldNote: {
		label: 'Field notes',
		hint: 'When a new story about a patient you follow is published.'
	},
	lastSignal: {
		label: 'Last signal',
		hint: 'When a patient’s transmitter has gone quiet for good, with a note from the staff.'
	}
};

export interface Preferences extends Record<UpdateCategory, boolean> {
	/** Keep receiving a patient's updates after the adoption ends. */
	keepFollowing: boolean;
}

export const DEFAULT_PREFERENCES: Preferences = {
	homecoming: true,
	waypoint: true,
	fieldNote: true,
	lastSignal: true,
	keepFollowing: false
};

const key = (email: string) => email.trim().toLowerCase();

export async function getPreferences(tx: Executor, email: string): Promise<Preferences> {
	const [row] = await tx
		.select()
		.from(mailPreferences)
		.where(eq(mailPreferences.email, key(email)));
	if (!row) return { ...DEFAULT_PREFERENCES };
	return {
		homecoming: row.homecoming,
		waypoint: row.waypoint,
		fieldNote: row.fieldNote,
		lastSignal: row.lastSignal,
		keepFollowing: row.keepFollowing
	};
}

/** Saves some or all preferences of an address at once (an unsubscribe link sets one). */
export async function savePreferences(
	tx: Executor,
	email: string,
	changes: Partial<Preferences>
): Promise<Preferences> {
	const values = { ...(await getPreferences(tx, email)), ...changes };
	await tx
		.insert(mailPreferences)
		.values({ email: key(email), ...values })
		.onConflictDoUpdate({
			target: mailPreferences.email,
			set: { ...changes, updatedAt: sql`now()` }
		});
	return values;
}

const checkbox = z
	.string()
	.optional()
	.transform((v) => v === 'on');

/** The preferences form (account page and the signed-link page): an unchecked box is "no". */
export const preferencesForm = z.object({
	homecoming: checkbox,
	waypoint: checkbox,
	fieldNote: checkbox,
	lastSignal: checkbox,
	keepFollowing: checkbox
});
