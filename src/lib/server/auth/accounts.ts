import { and, eq, isNull, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { audit } from '../audit';
import { INVITE_DAYS, PASSWORD_RESET_MINUTES, SIGN_IN_LINK_MINUTES, appOrigin } from '../config';
import { db, type Executor } from '../db';
import { roles as rolesTable, users, type Role } from '../db/schema';
import { enqueueMail } from '../mail/outbox';
import { organisationVars, renderEmail } from '../mail/templates';
import { kickOutbox } from '../mail/worker';
import { lucia } from './lucia';
import { STAFF_ROLES } from './roles';
import { burnPasswordCheck, hashPassword, verifyPassword } from './password';
import { consumeToken, createToken } from './tokens';

export function normaliseEmail(email: string): string {
	return email.trim().toLowerCase();
}

export async function findUserByEmail(email: string, tx: Executor = db()) {
	const [user] = await tx
		.select()
		.from(users)
		.where(eq(sql`lower(${users.email})`, normaliseEmail(email)));
	return user;
}

export class EmailTaken extends Error {
	constructor() {
		super(
			'An account with this e-mail already exists. Sign in instead, or ask for a sign-in link.'
		);
	}
}

/** Checks e-mail and password; returns the user id or null. Same work whether or not it exists. */
export async function checkPassword(email: string, password: string): Promise<string | null> {
	const user = await findUserByEmail(email);
	if (!user || !user.passwordHash || user.disabledAt) {
		await burnPasswordCheck(password);
		return null;
	}
	return (await verifyPassword(user.passwordHash, password)) ? user.id : null;
}

/** A new supporter account. Without a password the supporter signs in by e-mailed link. */
export async function createSupporter(input: {
	email: string;
	name: string;
	password?: string;
}): Promise<string> {
	const passwordHash = input.password ? await hashPassword(input.password) : null;
	return db().transaction(async (tx) => {
		if (await findUserByEmail(input.email, tx)) throw new EmailTaken();
		const id = randomUUID();
		await tx.insert(users).values({
			id,
			email: normaliseEmail(input.email),
			name: input.name.trim(),
			passwordHash
		});
		await tx.insert(rolesTable).values({ userId: id, role: 'supporter' });
		return id;
	});
}

/**
 * Sends a one-time sign-in link when the e-mail belongs to an active supporter. Says nothing
 * about whether it does: the caller shows the same message either way.
 */
export async function sendSignInLink(email: string, redirectTo = '/account'): Promise<void> {
	await db().transaction(async (tx) => {
		const user = await findUserByEmail(email, tx);
		if (!user || user.disabledAt) return;
		// Staff accounts reach donors' data: they sign in with a password, never by mailed link.
		const held = await tx
			.select({ role: rolesTable.role })
			.from(rolesTable)
			.where(eq(rolesTable.userId, user.id));
		if (held.some(({ role }) => STAFF_ROLES.includes(role))) return;
		const token = await createToken(tx, user.id, 'sign_in_link', SIGN_IN_LINK_MINUTES * 60_000);
		const link = `${appOrigin()}/signin/link/${token}?redirectTo=${encodeURIComponent(redirectTo)}`;
		const mail = await renderEmail('sign-in-link', {
			...(await organisationVars(tx)),
			name: user.name,
			link,
			minutes: String(SIGN_IN_LINK_MINUTES)
		});
		await enqueueMail(tx, {
			dedupeKey: `sign-in-link:${token}`,
			category: 'transactional',
			to: user.email,
			...mail
		});
	});
	kickOutbox();
}

export async function sendPasswordReset(email: string): Promise<void> {
	await db().transaction(async (tx) => {
		const user = await findUserByEmail(email, tx);
		if (!user || user.disabledAt) return;
		const token = await createToken(tx, user.id, 'password_reset', PASSWORD_RESET_MINUTES * 60_000);
		const mail = await renderEmail('password-reset', {
			...(await organisationVars(tx)),
			name: user.name,
			link: `${appOrigin()}/reset/${token}`,
			minutes: String(PASSWORD_RESET_MINUTES)
		});
		await enqueueMail(tx, {
			dedupeKey: `password-reset:${token}`,
			category: 'transactional',
			to: user.email,
			...mail
		});
	});
	kickOutbox();
}

/** Uses a sign-in link; returns the user id, or null when the link is unknown, used or expired. */
export async function useSignInLink(token: string): Promise<string | null> {
	return db().transaction(async (tx) => {
		const userId = await consumeToken(tx, token, 'sign_in_link');
		if (!userId) return null;
		const [user] = await tx
			.update(users)
			.set({ emailVerified: true, updatedAt: new Date() })
			.where(and(eq(users.id, userId), isNull(users.disabledAt)))
			.returning({ id: users.id });
		return user?.id ?? null;
	});
}

/**
 * Sets a new password from a reset or invite link and ends every other session of the account.
 * Returns the user id, or null when the link is no longer usable (nothing is changed then).
 */
export async function setPasswordWithToken(
	token: string,
	purpose: 'password_reset' | 'invite',
	password: string
): Promise<string | null> {
	const passwordHash = await hashPassword(password);
	const userId = await db().transaction(async (tx) => {
		const userId = await consumeToken(tx, token, purpose);
		if (!userId) return null;
		await tx
			.update(users)
			.set({ passwordHash, emailVerified: true, updatedAt: new Date() })
			.where(eq(users.id, userId));
		await audit(tx, userId, purpose === 'invite' ? 'invite.accepted' : 'password.reset', userId);
		return userId;
	});
	if (userId) await lucia().invalidateUserSessions(userId);
	return userId;
}

export async function changePassword(
	userId: string,
	current: string,
	next: string
): Promise<boolean> {
	const [user] = await db().select().from(users).where(eq(users.id, userId));
	if (!user?.passwordHash || !(await verifyPassword(user.passwordHash, current))) return false;
	await db()
		.update(users)
		.set({ passwordHash: await hashPassword(next), updatedAt: new Date() })
		.where(eq(users.id, userId));
	return true;
}

/** Invites a member of staff: an account without a password, its roles, and an e-mailed link. */
export async function inviteStaff(
	actor: { id: string; name: string },
	input: { email: string; name: string; roles: Role[] }
): Promise<string> {
	const userId = await db().transaction(async (tx) => {
		if (await findUserByEmail(input.email, tx)) throw new EmailTaken();
		const id = randomUUID();
		await tx
			.insert(users)
			.values({ id, email: normaliseEmail(input.email), name: input.name.trim() });
		await tx
			.insert(rolesTable)
			.values(input.roles.map((role) => ({ userId: id, role, grantedBy: actor.id })));
		const token = await createToken(tx, id, 'invite', INVITE_DAYS * 86_400_000);
		const mail = await renderEmail('staff-invite', {
			...(await organisationVars(tx)),
			name: input.name.trim(),
			inviterName: actor.name,
			link: `${appOrigin()}/invite/${token}`,
			days: String(INVITE_DAYS)
		});
		await enqueueMail(tx, {
			dedupeKey: `staff-invite:${token}`,
			category: 'transactional',
			to: normaliseEmail(input.email),
			...mail
		});
		await audit(tx, actor.id, 'staff.invited', id, { email: input.email, roles: input.roles });
		return id;
	});
	kickOutbox();
	return userId;
}

export class LastAdmin extends Error {
	constructor() {
		super('This is the last active administrator: grant admin to someone else first.');
	}
}

async function assertAnotherAdmin(tx: Executor, userId: string): Promise<void> {
	const others = await tx
		.select({ id: users.id })
		.from(rolesTable)
		.innerJoin(users, eq(users.id, rolesTable.userId))
		.where(
			and(
				eq(rolesTable.role, 'admin'),
				isNull(users.disabledAt),
				sql`${rolesTable.userId} <> ${userId}`
			)
		)
		.limit(1);
	if (others.length === 0) throw new LastAdmin();
}

export async function grantRole(actorId: string, userId: string, role: Role): Promise<void> {
	await db().transaction(async (tx) => {
		const added = await tx
			.insert(rolesTable)
			.values({ userId, role, grantedBy: actorId })
			.onConflictDoNothing()
			.returning({ role: rolesTable.role });
		if (added.length) await audit(tx, actorId, 'role.granted', userId, { role });
	});
}

export async function revokeRole(actorId: string, userId: string, role: Role): Promise<void> {
	await db().transaction(async (tx) => {
		if (role === 'admin') await assertAnotherAdmin(tx, userId);
		const removed = await tx
			.delete(rolesTable)
			.where(and(eq(rolesTable.userId, userId), eq(rolesTable.role, role)))
			.returning({ role: rolesTable.role });
		if (removed.length) await audit(tx, actorId, 'role.revoked', userId, { role });
	});
}

export async function setAccountDisabled(
	actorId: string,
	userId: string,
	disabled: boolean
): Promise<void> {
	await db().transaction(async (tx) => {
		if (disabled) {
			if (actorId === userId) throw new Error('You cannot disable your own account.');
			const isAdmin = await tx
				.select()
				.from(rolesTable)
				.where(and(eq(rolesTable.userId, userId), eq(rolesTable.role, 'admin')));
			if (isAdmin.length) await assertAnotherAdmin(tx, userId);
		}
		await tx
			.update(users)
			.set({ disabledAt: disabled ? new Date() : null, updatedAt: new Date() })
			.where(eq(users.id, userId));
		await audit(tx, actorId, disabled ? 'account.disabled' : 'account.enabled', userId);
	});
	if (disabled) await lucia().invalidateUserSessions(userId);
}
