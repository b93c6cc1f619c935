import { isHttpError, isRedirect } from '@sveltejs/kit';
import { eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Role } from '$lib/roles';
import { auditLog, organisationSettings, outbox, users } from '$lib/server/db/schema';
import { TEMPLATE_NAMES } from '$lib/server/mail/templates';
import { actions, load } from '../../src/routes/staff/mail/templates/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

function event(path: string, user: SessionUser | null, form?: Record<string, string>) {
	const url = new URL(`http://localhost${path}`);
	let body: FormData | undefined;
	if (form) {
		body = new FormData();
		for (const [key, value] of Object.entries(form)) body.set(key, value);
	}
	return {
		request: new Request(url, { method: form ? 'POST' : 'GET', body }),
		url,
		locals: { user, session: null, requestId: 'test' },
		params: {},
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@tideward.test`;
	await db().insert(users).values({ id, email, name: 'Noor Kelp' });
	return { id, email, name: 'Noor Kelp', roles };
}

const thrown = (run: () => unknown) =>
	Promise.resolve()
		.then(run)
		.then(
			() => null,
			(e: unknown) => e
		);

interface PreviewData {
	me: string;
	templates: { name: string; subject: string }[];
	selected: {
		name: string;
		subject: string;
		html: string;
		text: string;
		variables: string[];
	} | null;
}

describe('e-mail template previews', () => {
	it('an admin sees every template filled with demo values', async () => {
		await db()
			.insert(organisationSettings)
			.values({
				id: 1,
				displayName: 'Saltmarsh Turtle Hospital',
				legalName: 'Saltmarsh Turtle Hospital, Inc.',
				postalAddress: '4 Heron Lane\nPort Example, EX 00000'
			})
			.onConflictDoUpdate({
				target: organisationSettings.id,
				set: {
					displayName: 'Saltmarsh Turtle Hospital',
					postalAddress: '4 Heron Lane\nPort Example, EX 00000'
				}
			});
		const admin = await person(['admin']);

		const list = (await load(event('/staff/mail/templates', admin))) as PreviewData;
		expect(list.selected).toBeNull();
		expect(list.templates.map((t) => t.name)).toEqual(TEMPLATE_NAMES);
		for (const t of list.templates) expect(t.subject.trim()).not.toBe('');

		for (const name of TEMPLATE_NAMES) {
			const data = (await load(
				event(`/staff/mail/templates?template=${name}`, admin)
			)) as PreviewData;
			expect(data.selected?.name).toBe(name);
			expect(data.selected?.subject.trim()).not.toBe('');
			expect(data.selected?.html).toMatch(/^<!doctype html>/i);
			expect(data.selected?.html).toContain('4 Heron Lane<br />Port Example, EX 00000');
			expect(data.selected?.text).toContain('Saltmarsh Turtle Hospital\n4 Heron Lane');
			expect(data.selected?.html).not.toMatch(/\{\{|\}\}/);
		}

		const updates = (await load(
			event('/staff/mail/templates?template=waypoint-update', admin)
		)) as PreviewData;
		expect(updates.selected?.subject).toBe('Perla has travelled 1,500 km (932 mi)');
		expect(updates.selected?.text).toMatch(/Unsubscribe from these updates: http:\/\//);

		expect(await db().select().from(outbox)).toEqual([]);
	});

	it('answers 404 for a template that does not exist', async () => {
		const admin = await person(['admin']);
		const error = await thrown(() =>
			load(event('/staff/mail/templates?template=..%2Fsecrets', admin))
		);
		expect(isHttpError(error, 404)).toBe(true);
	});

	it('refuses anyone but an admin, and queues nothing for them', async () => {
		for (const roles of [['educator'], ['supporter'], ['development', 'tracker']] as Role[][]) {
			const someone = await person(roles);
			for (const attempt of [
				() => load(event('/staff/mail/templates', someone)),
				() => load(event('/staff/mail/templates?template=field-note', someone)),
				() =>
					actions.sendTest(
						event('/staff/mail/templates?/sendTest', someone, { template: 'field-note' })
					)
			]) {
				expect(isHttpError(await thrown(attempt), 403)).toBe(true);
			}
			expect(await db().select().from(outbox).where(eq(outbox.toAddress, someone.email))).toEqual(
				[]
			);
		}
		expect(isRedirect(await thrown(() => load(event('/staff/mail/templates', null))))).toBe(true);
		const visitor = await thrown(() =>
			actions.sendTest(event('/staff/mail/templates?/sendTest', null, { template: 'field-note' }))
		);
		expect(isHttpError(visitor, 401)).toBe(true);
		expect(await db().select().from(outbox)).toEqual([]);
	});

	it('"send me a test" queues exactly one message to the admin, once per click', async () => {
		const admin = await person(['admin']);
		const result = await actions.sendTest(
			event('/staff/mail/templates?/sendTest', admin, { template: 'homecoming-update' })
		);
		expect(result).toEqual({ sentTo: admin.email, template: 'homecoming-update' });

		const queued = await db().select().from(outbox).where(eq(outbox.toAddress, admin.email));
		expect(queued).toHaveLength(1);
		expect(queued[0]).toMatchObject({ status: 'pending', category: 'transactional' });
		expect(queued[0].subject).toBe('Perla is back in the sea');
		expect(queued[0].text).toContain('Unsubscribe from these updates: http');
		expect(queued[0].html).toContain('alt="Perla, an olive ridley sea turtle"');
		expect(await db().select().from(outbox)).toHaveLength(1);

		const [entry] = await db().select().from(auditLog).where(eq(auditLog.actorId, admin.id));
		expect(entry).toMatchObject({
			action: 'mail.template_test_sent',
			details: { template: 'homecoming-update' }
		});

		await actions.sendTest(
			event('/staff/mail/templates?/sendTest', admin, { template: 'homecoming-update' })
		);
		expect(await db().select().from(outbox).where(eq(outbox.toAddress, admin.email))).toHaveLength(
			2
		);
	});

	it('rejects an unknown template with a message and queues nothing', async () => {
		const admin = await person(['admin']);
		const result = await actions.sendTest(
			event('/staff/mail/templates?/sendTest', admin, { template: 'not-a-template' })
		);
		expect(result).toMatchObject({
			status: 400,
			data: { errors: { template: 'Choose one of the e-mail templates.' } }
		});
		expect(await db().select().from(outbox).where(eq(outbox.toAddress, admin.email))).toEqual([]);
	});
});
