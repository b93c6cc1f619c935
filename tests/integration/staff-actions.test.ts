import { isActionFailure, isHttpError } from '@sveltejs/kit';
import { count, eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { auditLog, organisationSettings, users } from '$lib/server/db/schema';
import type { Role } from '$lib/roles';
import { actions as settingsActions } from '../../src/routes/staff/settings/+page.server';
import { actions as usersActions } from '../../src/routes/staff/users/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

function event(path: string, user: SessionUser | null, form: Record<string, string | string[]>) {
	const body = new FormData();
	for (const [key, value] of Object.entries(form)) {
		for (const v of [value].flat()) body.append(key, v);
	}
	const url = new URL(`http://localhost${path}`);
	return {
		request: new Request(url, { method: 'POST', body }),
		url,
		locals: { user, session: null, requestId: 'test' },
		params: {},
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@example.test`;
	await db()
		.insert(users)
		.values({ id, email, name: `Person ${id.slice(0, 4)}` });
	return { id, email, name: `Person ${id.slice(0, 4)}`, roles };
}

const goodSettings = {
	displayName: 'Example Turtle Hospital',
	legalName: 'Example Turtle Hospital Inc.',
	taxId: '00-0000000',
	postalAddress: '1 Example Road\nExample Town 00000',
	hotlineName: 'Example wildlife hotline',
	hotlineNumber: '(555) 555-0100',
	currency: 'usd',
	distanceUnit: 'mi',
	storyReviewRequired: 'on'
};

describe('settings form', () => {
	it('saves valid settings and records who did it', async () => {
		const admin = await person(['admin']);
		const result = await settingsActions.default(event('/staff/settings', admin, goodSettings));
		expect(result).toEqual({ saved: 'Settings saved.' });
		const [row] = await db().select().from(organisationSettings);
		expect(row.distanceUnit).toBe('mi');
		expect(row.legalName).toBe('Example Turtle Hospital Inc.');
		const [entry] = await db()
			.select()
			.from(auditLog)
			.where(eq(auditLog.action, 'settings.updated'));
		expect(entry.actorId).toBe(admin.id);
	});

	it('answers bad input with a message per field and changes nothing', async () => {
		const admin = await person(['admin']);
		const before = await db().select().from(organisationSettings);
		const [{ n: auditBefore }] = await db().select({ n: count() }).from(auditLog);
		const result = await settingsActions.default(
			event('/staff/settings', admin, {
				...goodSettings,
				legalName: '   ',
				hotlineNumber: 'call us',
				distanceUnit: 'leagues'
			})
		);
		expect(isActionFailure(result)).toBe(true);
		if (!isActionFailure(result)) return;
		expect(result.status).toBe(400);
		expect((result.data as { errors?: unknown } | undefined)?.errors).toEqual({
			legalName: 'Enter the legal name.',
			hotlineNumber: 'Enter a phone number: digits, spaces, ( ) - . and an optional +.',
			distanceUnit: 'Choose kilometres or miles.'
		});
		expect(await db().select().from(organisationSettings)).toEqual(before);
		const [{ n: auditAfter }] = await db().select({ n: count() }).from(auditLog);
		expect(auditAfter).toBe(auditBefore);
	});

	it('refuses a signed-in educator with 403 and a visitor with 401, before reading the form', async () => {
		for (const [user, status] of [
			[await person(['educator']), 403],
			[null, 401]
		] as const) {
			try {
				await settingsActions.default(event('/staff/settings', user, goodSettings));
				expect.unreachable('the action should have refused');
			} catch (error) {
				expect(isHttpError(error) && error.status).toBe(status);
			}
		}
	});
});

describe('invite form', () => {
	it('needs at least one staff role and a valid address, and writes nothing otherwise', async () => {
		const admin = await person(['admin']);
		const [{ n: before }] = await db().select({ n: count() }).from(users);
		const result = await usersActions.invite(
			event('/staff/users', admin, { name: 'New Person', email: 'not an address' })
		);
		expect(isActionFailure(result) && result.data).toMatchObject({
			errors: {
				email: 'Enter an e-mail address like name@example.org.',
				roles: 'Choose at least one staff role.'
			}
		});
		const smuggled = await usersActions.invite(
			event('/staff/users', admin, {
				name: 'New Person',
				email: 'ok@example.test',
				roles: ['supporter']
			})
		);
		expect(isActionFailure(smuggled)).toBe(true);
		const [{ n: after }] = await db().select({ n: count() }).from(users);
		expect(after).toBe(before);
	});
});
