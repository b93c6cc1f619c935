// Hostile input through the public and supporter forms: sign-in (password and link), sign-up,
// password reset, one-time links, adopting (with the local fake processor), e-mail preferences by
// token, claiming a gift, and the supporter's own account forms.
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, expect } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { adoptionLevels, adoptions, patients, users } from '$lib/server/db/schema';
import { signingKey, unsubscribeToken } from '$lib/server/updates/tokens';
import { actions as accountActions } from '../../../src/routes/account/+page.server';
import { actions as giftActions } from '../../../src/routes/gifts/[token]/+page.server';
import { actions as inviteActions } from '../../../src/routes/invite/[token]/+page.server';
import { actions as adoptActions } from '../../../src/routes/patients/[slug]/adopt/+page.server';
import { actions as preferenceActions } from '../../../src/routes/preferences/[token]/+page.server';
import { actions as resetActions } from '../../../src/routes/reset/+page.server';
import { actions as resetTokenActions } from '../../../src/routes/reset/[token]/+page.server';
import { actions as signinActions } from '../../../src/routes/signin/+page.server';
import { actions as linkActions } from '../../../src/routes/signin/link/[token]/+page.server';
import { actions as signupActions } from '../../../src/routes/signup/+page.server';
import { useTestDatabase } from '../../setup/test-db';
import { startTestProcessor, type TestProcessor } from '../fake-processor';
import { people } from '../newsroom-helpers';
import { SHAPES, type Outcome } from './harness';
import {
	EMAILS,
	FIELD_PAYLOADS,
	PARAMS,
	PATH_TRAVERSAL,
	SOME_TEXT,
	TEXT_PAYLOADS,
	UNICODE,
	XSS
} from './payloads';
import { hostileForms, type FormSurface } from './surfaces';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);

let processor: TestProcessor;
let supporter: SessionUser;
let preferencesToken = '';
const PATIENT = crypto.randomUUID();
const LEVEL = crypto.randomUUID();

const text = [...TEXT_PAYLOADS, ...SHAPES];
const someText = [...SOME_TEXT, SHAPES[0]];
const fieldValues = [...FIELD_PAYLOADS, SHAPES[0], SHAPES[1]];
const emails = [...EMAILS, SHAPES[0], SHAPES[1]];
/** Where a sign-in may send the browser afterwards: open redirects and header breakers. */
const redirects = [
	{ id: 'other site', value: '//evil.example/' },
	{ id: 'backslash', value: '/\\evil.example' },
	{ id: 'tab before slash', value: '/\t/evil.example' },
	{ id: 'CRLF header', value: '/account\r\nSet-Cookie: x=1' },
	{ id: 'emoji path', value: '/🐢' },
	{ id: 'javascript URL', value: 'javascript:alert(1)' },
	...PATH_TRAVERSAL.slice(0, 2),
	UNICODE[0],
	UNICODE[5]
];
/** A password field: very long, odd characters, markup; never stored as sent. */
const passwords = [...SOME_TEXT.slice(0, 6), XSS[0], SHAPES[0], SHAPES[1]];

beforeAll(async () => {
	processor = await startTestProcessor('hostile-forms');
	supporter = await person(['supporter']);
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'hostile-adopt',
		name: 'Brisa',
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'in_rehabilitation'
	});
	await db()
		.insert(adoptionLevels)
		.values({ id: LEVEL, slug: 'ripple-h', name: 'Ripple', amountCents: 2500, interval: 'once' });
	// the signing key is made once, on first use: make it now so that refusals write nothing
	preferencesToken = unsubscribeToken(await signingKey(), {
		email: 'reader@example.test',
		category: 'waypoint'
	});
});

afterAll(() => processor?.stop());

async function adoptionOf(outcome: Outcome, form: Record<string, unknown>) {
	expect(outcome.kind, 'a saved adoption goes on to the checkout page').toBe('redirect');
	const [row] = await db()
		.select()
		.from(adoptions)
		.where(eq(adoptions.id, String(form.attemptId)));
	return row;
}

const adoptForm = () => ({
	attemptId: crypto.randomUUID(),
	levelId: LEVEL,
	amount: '',
	kind: 'gift',
	supporterName: 'Ana Reader',
	supporterEmail: 'ana.reader@example.test',
	recipientName: 'Bo Friend',
	recipientEmail: 'bo.friend@example.test',
	giftMessage: 'Happy birthday!',
	deliverOn: ''
});

hostileForms(
	'public-forms',
	db,
	() => {
		const surfaces: FormSurface[] = [
			{
				name: 'Sign in with a password',
				action: signinActions.password,
				path: '/signin?/password',
				user: () => null,
				valid: () => ({
					email: 'nobody@example.test',
					password: 'not the password',
					redirectTo: ''
				}),
				// a wrong password counts against the account and the address: that is the point
				allow: ['rate_limits'],
				mustRefuse: true,
				fields: [
					{ field: 'email', payloads: emails },
					{ field: 'password', payloads: passwords },
					{ field: 'redirectTo', payloads: redirects }
				]
			},
			{
				name: 'Sign in by e-mailed link',
				action: signinActions.link,
				path: '/signin?/link',
				user: () => null,
				valid: () => ({ email: 'nobody@example.test', redirectTo: '' }),
				allow: ['rate_limits'],
				fields: [
					// the answer is the same for any well-formed address, and nothing is stored for it
					{ field: 'email', payloads: emails },
					{ field: 'redirectTo', payloads: redirects }
				]
			},
			{
				name: 'Sign up',
				action: signupActions.default,
				path: '/signup',
				user: () => null,
				valid: () => ({
					name: 'New Reader',
					email: `${crypto.randomUUID().slice(0, 8)}@example.test`,
					password: 'a long enough password',
					redirectTo: ''
				}),
				allow: ['rate_limits'],
				fields: [
					{
						field: 'name',
						payloads: text,
						stored: async (_o, { form }) => {
							const [row] = await db()
								.select({ name: users.name })
								.from(users)
								.where(eq(users.email, String(form.email)));
							return row?.name;
						}
					},
					{ field: 'email', payloads: emails },
					{ field: 'password', payloads: passwords },
					{
						field: 'redirectTo',
						payloads: redirects,
						check: async (outcome) => {
							// every hostile target falls back to the account page
							expect(outcome).toMatchObject({ kind: 'redirect', location: '/account' });
						}
					}
				]
			},
			{
				name: 'Ask for a password reset',
				action: resetActions.default,
				path: '/reset',
				user: () => null,
				valid: () => ({ email: 'nobody@example.test' }),
				allow: ['rate_limits'],
				fields: [{ field: 'email', payloads: emails }]
			},
			{
				name: 'Choose a password from a reset link',
				action: resetTokenActions.default,
				path: '/reset/{param}',
				user: () => null,
				valid: () => ({ password: 'a long enough password', confirm: 'a long enough password' }),
				mustRefuse: true,
				fields: [
					{ field: 'token', in: 'params', payloads: PARAMS },
					{ field: 'password', payloads: passwords }
				],
				params: () => ({ token: 'not-a-token' })
			},
			{
				name: 'Choose a password from an invitation',
				action: inviteActions.default,
				path: '/invite/{param}',
				user: () => null,
				valid: () => ({ password: 'a long enough password', confirm: 'a long enough password' }),
				mustRefuse: true,
				fields: [{ field: 'token', in: 'params', payloads: PARAMS }]
			},
			{
				name: 'Use a sign-in link',
				action: linkActions.default,
				path: '/signin/link/{param}',
				user: () => null,
				valid: () => ({ redirectTo: '/account' }),
				mustRefuse: true,
				params: () => ({ token: 'not-a-token' }),
				fields: [
					{ field: 'token', in: 'params', payloads: PARAMS },
					{ field: 'redirectTo', payloads: redirects }
				]
			},
			{
				name: 'Adopt a patient (as a gift)',
				action: adoptActions.default,
				path: '/patients/hostile-adopt/adopt',
				params: () => ({ slug: 'hostile-adopt' }),
				user: () => null,
				valid: adoptForm,
				fields: [
					{
						field: 'supporterName',
						payloads: text,
						stored: async (o, { form }) => (await adoptionOf(o, form)).supporterName
					},
					{
						field: 'giftMessage',
						payloads: text,
						stored: async (o, { form }) => (await adoptionOf(o, form)).giftMessage
					},
					{
						field: 'recipientName',
						payloads: someText,
						stored: async (o, { form }) => (await adoptionOf(o, form)).recipientName
					},
					{ field: 'supporterEmail', payloads: emails },
					{ field: 'recipientEmail', payloads: emails },
					{ field: 'amount', payloads: fieldValues },
					{ field: 'levelId', payloads: fieldValues },
					{ field: 'attemptId', payloads: fieldValues },
					{ field: 'kind', payloads: fieldValues },
					{ field: 'deliverOn', payloads: fieldValues },
					{ field: 'classSize', payloads: fieldValues }
				]
			},
			{
				name: 'Adopt a patient that is not there',
				action: adoptActions.default,
				path: '/patients/{param}/adopt',
				user: () => null,
				valid: adoptForm,
				mustRefuse: true,
				fields: [{ field: 'slug', in: 'params', payloads: PARAMS }]
			},
			{
				name: 'E-mail choices by link',
				action: preferenceActions.default,
				path: '/preferences/{param}',
				params: () => ({ token: preferencesToken }),
				user: () => null,
				valid: () => ({ homecoming: 'on', waypoint: 'on' }),
				fields: [
					{ field: 'token', in: 'params', payloads: PARAMS },
					{ field: 'homecoming', payloads: fieldValues },
					{ field: 'keepFollowing', payloads: fieldValues }
				]
			},
			{
				name: 'Keep a gift in one’s account',
				action: giftActions.default,
				path: '/gifts/{param}',
				user: () => supporter,
				valid: () => ({}),
				mustRefuse: true,
				fields: [{ field: 'token', in: 'params', payloads: PARAMS }]
			},
			{
				name: 'Account: change password',
				action: accountActions.password,
				path: '/account?/password',
				user: () => supporter,
				valid: () => ({
					current: 'not the password',
					password: 'a long enough password',
					confirm: 'a long enough password'
				}),
				mustRefuse: true,
				fields: [
					{ field: 'current', payloads: passwords },
					{ field: 'password', payloads: passwords },
					{ field: 'confirm', payloads: passwords }
				]
			},
			{
				name: 'Account: change a monthly gift',
				action: accountActions.change,
				path: '/account?/change',
				user: () => supporter,
				valid: () => ({ adoptionId: 'no-such-adoption', levelId: LEVEL, amount: '' }),
				mustRefuse: true,
				fields: [
					{ field: 'adoptionId', payloads: fieldValues },
					{ field: 'levelId', payloads: fieldValues },
					{ field: 'amount', payloads: fieldValues }
				]
			},
			{
				name: 'Account: billing page',
				action: accountActions.billing,
				path: '/account?/billing',
				user: () => supporter,
				valid: () => ({ adoptionId: 'no-such-adoption' }),
				mustRefuse: true,
				fields: [{ field: 'adoptionId', payloads: fieldValues }]
			},
			{
				name: 'Account: e-mail choices',
				action: accountActions.preferences,
				path: '/account?/preferences',
				user: () => supporter,
				valid: () => ({ homecoming: 'on' }),
				fields: [
					{ field: 'homecoming', payloads: fieldValues },
					{ field: 'fieldNote', payloads: fieldValues }
				]
			}
		];
		return surfaces;
	},
	500
);
