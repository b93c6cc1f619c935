import { eq } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { audit } from '../audit';
import { appOrigin, INVITE_DAYS } from '../config';
import { db } from '../db';
import { roles, users } from '../db/schema';
import { findUserByEmail, normaliseEmail } from './accounts';
import { createToken } from './tokens';

/**
 * A fresh production database has no one who could invite staff. With FIRST_ADMIN_EMAIL set and
 * no administrator yet, the server creates that account and prints a one-time link (valid
 * INVITE_DAYS days) to choose its password. Printed, not mailed: mail may not be set up yet.
 */
export async function ensureFirstAdmin(
	email = process.env.FIRST_ADMIN_EMAIL
): Promise<string | null> {
	if (!email) return null;
	return db().transaction(async (tx) => {
		const admins = await tx.select().from(roles).where(eq(roles.role, 'admin')).limit(1);
		if (admins.length) return null;
		const existing = await findUserByEmail(email, tx);
		const id = existing?.id ?? randomUUID();
		if (!existing) {
			await tx.insert(users).values({ id, email: normaliseEmail(email), name: 'Administrator' });
		}
		await tx.insert(roles).values({ userId: id, role: 'admin' }).onConflictDoNothing();
		const token = await createToken(tx, id, 'invite', INVITE_DAYS * 86_400_000);
		await audit(tx, null, 'admin.bootstrapped', id, { email: normaliseEmail(email) });
		const link = `${appOrigin()}/invite/${token}`;
		console.log(`First administrator ${email}: choose a password at ${link}`);
		return link;
	});
}
