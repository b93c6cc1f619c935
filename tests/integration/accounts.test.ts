import { count, eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import {
	checkPassword,
	createSupporter,
	EmailTaken,
	grantRole,
	inviteStaff,
	LastAdmin,
	revokeRole,
	sendPasswordReset,
	sendSignInLink,
	setAccountDisabled,
	setPasswordWithToken,
	useSignInLink
} from '$lib/server/auth/accounts';
import { lucia } from '$lib/server/auth/lucia';
import {
	assertSignInAllowed,
	LIMITS,
	recordFailedSignIn,
	TooManyAttempts
} from '$lib/server/auth/rate-limit';
import { createToken } from '$lib/server/auth/tokens';
import { auditLog, authTokens, outbox, roles, users } from '$lib/server/db/schema';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

function linkToken(text: string, path: string): string {
	const match = text.match(new RegExp(`${path}/([a-z0-9]+)`));
	if (!match) throw new Error(`no ${path} link in: ${text}`);
	return match[1];
}

async function outboxTo(address: string) {
	return db().select().from(outbox).where(eq(outbox.toAddress, address));
}

describe('passwords and supporter accounts', () => {
	it('creates a supporter who signs in with the right password only', async () => {
		const id = await createSupporter({
			email: ' Coral.Reader@Example.test ',
			name: 'Coral Reader',
			password: 'a long enough passphrase'
		});
		expect(await checkPassword('coral.reader@example.test', 'a long enough passphrase')).toBe(id);
		expect(await checkPassword('coral.reader@example.test', 'wrong passphrase!!')).toBeNull();
		expect(await checkPassword('nobody@example.test', 'a long enough passphrase')).toBeNull();
		const [stored] = await db().select().from(users).where(eq(users.id, id));
		expect(stored.passwordHash).toMatch(/^\$argon2id\$/);
		expect(await db().select().from(roles).where(eq(roles.userId, id))).toEqual([
			expect.objectContaining({ role: 'supporter' })
		]);
	});

	it('refuses a second account for the same e-mail and writes nothing', async () => {
		const [{ n: before }] = await db().select({ n: count() }).from(users);
		await expect(
			createSupporter({ email: 'CORAL.reader@example.test', name: 'Again' })
		).rejects.toBeInstanceOf(EmailTaken);
		const [{ n: after }] = await db().select({ n: count() }).from(users);
		expect(after).toBe(before);
	});
});

describe('sign-in links', () => {
	it('queues a link for a known account, which works exactly once', async () => {
		const id = await createSupporter({ email: 'linky@example.test', name: 'Linky' });
		await sendSignInLink('LINKY@example.test');
		const [mail] = await outboxTo('linky@example.test');
		expect(mail.category).toBe('transactional');
		const token = linkToken(mail.text, '/signin/link');
		expect(await useSignInLink(token)).toBe(id);
		expect(await useSignInLink(token)).toBeNull();
		const [user] = await db().select().from(users).where(eq(users.id, id));
		expect(user.emailVerified).toBe(true);
	});

	it('queues nothing for an unknown address, nor for a staff account', async () => {
		await sendSignInLink('stranger@example.test');
		expect(await outboxTo('stranger@example.test')).toEqual([]);
		const id = await createSupporter({ email: 'educator.too@example.test', name: 'Both' });
		await db().insert(roles).values({ userId: id, role: 'educator' });
		await sendSignInLink('educator.too@example.test');
		expect(await outboxTo('educator.too@example.test')).toEqual([]);
	});

	it('refuses an expired link and a link of another purpose', async () => {
		const id = await createSupporter({ email: 'late@example.test', name: 'Late' });
		const expired = await createToken(db(), id, 'sign_in_link', -1000);
		expect(await useSignInLink(expired)).toBeNull();
		const reset = await createToken(db(), id, 'password_reset', 60_000);
		expect(await useSignInLink(reset)).toBeNull();
		const [row] = await db().select().from(authTokens).where(eq(authTokens.userId, id)).limit(1);
		expect(row.tokenHash).not.toBe(expired);
	});

	it('two racing uses of one link sign in once', async () => {
		const id = await createSupporter({ email: 'race@example.test', name: 'Race' });
		const token = await createToken(db(), id, 'sign_in_link', 60_000);
		const results = await Promise.all([useSignInLink(token), useSignInLink(token)]);
		expect(results.filter((r) => r === id)).toHaveLength(1);
	});
});

describe('password reset by e-mail', () => {
	it('sets a new password once, ends the old sessions, and the old password stops working', async () => {
		const id = await createSupporter({
			email: 'forgetful@example.test',
			name: 'Forgetful',
			password: 'old password 123'
		});
		const before = await lucia().createSession(id, {});
		await sendPasswordReset('Forgetful@example.test');
		const [mail] = await outboxTo('forgetful@example.test');
		expect(mail.subject).toMatch(/password/i);
		const token = linkToken(mail.text, '/reset');
		expect(await setPasswordWithToken(token, 'password_reset', 'new password 456')).toBe(id);
		expect(await setPasswordWithToken(token, 'password_reset', 'third password 789')).toBeNull();
		expect(await checkPassword('forgetful@example.test', 'old password 123')).toBeNull();
		expect(await checkPassword('forgetful@example.test', 'new password 456')).toBe(id);
		expect((await lucia().validateSession(before.id)).session).toBeNull();
	});

	it('an invite link cannot reset a password', async () => {
		const id = await createSupporter({ email: 'mixup@example.test', name: 'Mixup' });
		const invite = await createToken(db(), id, 'invite', 60_000);
		expect(await setPasswordWithToken(invite, 'password_reset', 'sneaky password 1')).toBeNull();
		await sendPasswordReset('nobody.here@example.test');
		expect(await outboxTo('nobody.here@example.test')).toEqual([]);
	});
});

describe('failed sign-ins are slowed down', () => {
	it(`blocks an account after ${LIMITS.account} failures, not other accounts`, async () => {
		for (let i = 0; i < LIMITS.account; i++) {
			await expect(
				assertSignInAllowed('target@example.test', '203.0.113.5')
			).resolves.toBeUndefined();
			await recordFailedSignIn('target@example.test', `203.0.113.${10 + i}`);
		}
		await expect(assertSignInAllowed('TARGET@example.test', '203.0.113.99')).rejects.toBeInstanceOf(
			TooManyAttempts
		);
		await expect(
			assertSignInAllowed('other@example.test', '203.0.113.99')
		).resolves.toBeUndefined();
	});

	it(`blocks an address after ${LIMITS.address} failures across accounts`, async () => {
		for (let i = 0; i < LIMITS.address; i++) {
			await recordFailedSignIn(`guess${i}@example.test`, '198.51.100.7');
		}
		await expect(assertSignInAllowed('fresh@example.test', '198.51.100.7')).rejects.toThrow(
			/Too many attempts/
		);
		await expect(
			assertSignInAllowed('fresh@example.test', '198.51.100.8')
		).resolves.toBeUndefined();
	});
});

describe('staff administration', () => {
	async function makeAdmin(email: string) {
		const id = await createSupporter({
			email,
			name: email.split('@')[0],
			password: 'admin password 1'
		});
		await db().insert(roles).values({ userId: id, role: 'admin' });
		return { id, name: email.split('@')[0] };
	}

	it('invites staff: account without password, roles, mail, audit; the invite works once', async () => {
		const admin = await makeAdmin('boss@example.test');
		const id = await inviteStaff(admin, {
			email: 'new.educator@example.test',
			name: 'New Educator',
			roles: ['educator', 'tracker']
		});
		const held = await db().select({ role: roles.role }).from(roles).where(eq(roles.userId, id));
		expect(held.map((r) => r.role).sort()).toEqual(['educator', 'tracker']);
		const [mail] = await outboxTo('new.educator@example.test');
		const token = linkToken(mail.text, '/invite');
		expect(await checkPassword('new.educator@example.test', 'chosen password 1')).toBeNull();
		expect(await setPasswordWithToken(token, 'invite', 'chosen password 1')).toBe(id);
		expect(await setPasswordWithToken(token, 'invite', 'another password 2')).toBeNull();
		expect(await checkPassword('new.educator@example.test', 'chosen password 1')).toBe(id);
		const actions = await db().select().from(auditLog).where(eq(auditLog.subject, id));
		expect(actions.map((a) => a.action)).toEqual(
			expect.arrayContaining(['staff.invited', 'invite.accepted'])
		);
	});

	it('will not remove the last administrator', async () => {
		await db().delete(roles).where(eq(roles.role, 'admin'));
		const only = await makeAdmin('only.admin@example.test');
		await expect(revokeRole(only.id, only.id, 'admin')).rejects.toBeInstanceOf(LastAdmin);
		const second = await makeAdmin('second.admin@example.test');
		await revokeRole(second.id, only.id, 'admin');
		const left = await db().select().from(roles).where(eq(roles.role, 'admin'));
		expect(left.map((r) => r.userId)).toEqual([second.id]);
	});

	it('grants a role once and records it', async () => {
		const admin = await makeAdmin('granter@example.test');
		const id = await createSupporter({ email: 'helper@example.test', name: 'Helper' });
		await grantRole(admin.id, id, 'development');
		await grantRole(admin.id, id, 'development');
		const logged = await db().select().from(auditLog).where(eq(auditLog.subject, id));
		expect(logged.filter((a) => a.action === 'role.granted')).toHaveLength(1);
	});

	it('disabling an account ends its sessions and stops its sign-in', async () => {
		const admin = await makeAdmin('disabler@example.test');
		const id = await createSupporter({
			email: 'leaver@example.test',
			name: 'Leaver',
			password: 'leaver password 1'
		});
		const session = await lucia().createSession(id, {});
		await setAccountDisabled(admin.id, id, true);
		expect((await lucia().validateSession(session.id)).session).toBeNull();
		expect(await checkPassword('leaver@example.test', 'leaver password 1')).toBeNull();
		await sendSignInLink('leaver@example.test');
		expect(await outboxTo('leaver@example.test')).toEqual([]);
		await expect(setAccountDisabled(admin.id, admin.id, true)).rejects.toThrow(/your own account/);
	});
});

describe('first administrator', () => {
	it('is created once from FIRST_ADMIN_EMAIL, with a link to set a password', async () => {
		const { ensureFirstAdmin } = await import('$lib/server/auth/bootstrap');
		await db().delete(roles).where(eq(roles.role, 'admin'));
		const link = await ensureFirstAdmin('founder@example.test');
		expect(link).toMatch(/\/invite\/[a-z0-9]+$/);
		expect(await ensureFirstAdmin('someone.else@example.test')).toBeNull();
		const id = await setPasswordWithToken(link!.split('/').at(-1)!, 'invite', 'founder password 1');
		expect(await checkPassword('founder@example.test', 'founder password 1')).toBe(id);
	});
});
