// The staff outbox page: who may see it, what it counts per supporter-update event, paging and
// filtering, and sending failed messages again (one or all) through the real worker to the
// local SMTP catcher.
import { isActionFailure, isHttpError } from '@sveltejs/kit';
import { asc, count, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Role } from '$lib/roles';
import {
	adoptionLevels,
	adoptions,
	auditLog,
	caughtMail,
	organisationSettings,
	outbox,
	patientEvents,
	patients,
	users
} from '$lib/server/db/schema';
import { startCatcher, type Catcher } from '$lib/server/mail/catcher';
import { OUTBOX_PAGE_SIZE } from '$lib/server/mail/outbox-admin';
import { newMessageId } from '$lib/server/mail/outbox';
import { createMailTransport, type MailTransport } from '$lib/server/mail/transport';
import { runOutboxOnce } from '$lib/server/mail/worker';
import { fanOutEvent } from '$lib/server/updates/fanout';
import { actions, load } from '../../src/routes/staff/outbox/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
process.env.ORIGIN = 'https://tideward.example';
const db = useTestDatabase();

const BRISA = crypto.randomUUID();
const OLEAJE = crypto.randomUUID();
const LEVEL = crypto.randomUUID();
const ADDRESS = '1 Shore Road\nPunta Ejemplo, PR 00000';

type Status = 'pending' | 'sent' | 'failed';
type Counts = Record<Status, number>;
interface PageData {
	counts: Counts;
	blocked: 'postal-address' | null;
	status: Status | null;
	page: number;
	pageCount: number;
	total: number;
	events: {
		id: number;
		kind: string;
		patientName: string;
		occurredOn: string;
		outcome: string | null;
		recipientCount: number | null;
		messages: Counts;
	}[];
	messages: { id: number; to: string; subject: string; status: Status; attempts: number }[];
}

function request(path: string, user: SessionUser | null, form?: Record<string, string>) {
	const url = new URL(`https://tideward.example${path}`);
	let req = new Request(url);
	if (form) {
		const body = new FormData();
		for (const [k, v] of Object.entries(form)) body.append(k, v);
		req = new Request(url, { method: 'POST', body });
	}
	return {
		request: req,
		url,
		locals: { user, session: null, requestId: 'test' },
		params: {},
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

const view = async (path: string, user: SessionUser) =>
	(await load(request(path, user))) as unknown as PageData;

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@tideward.test`;
	await db().insert(users).values({ id, email, name: 'Rui Shoal' });
	return { id, email, name: 'Rui Shoal', roles };
}

async function setAddress(address: string) {
	await db()
		.insert(organisationSettings)
		.values({
			id: 1,
			displayName: 'Punta Ejemplo Turtle Hospital',
			legalName: 'Punta Ejemplo Turtle Hospital, Inc.',
			postalAddress: address
		})
		.onConflictDoUpdate({ target: organisationSettings.id, set: { postalAddress: address } });
}

async function patient(id: string, slug: string, name: string) {
	await db().insert(patients).values({
		id,
		slug,
		name,
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'released'
	});
}

async function adopters(patientId: string, prefix: string, n: number) {
	await db()
		.insert(adoptions)
		.values(
			Array.from({ length: n }, (_, i) => ({
				id: crypto.randomUUID(),
				patientId,
				levelId: LEVEL,
				kind: 'self' as const,
				status: 'active' as const,
				interval: 'once' as const,
				amountCents: 2500,
				currency: 'usd',
				supporterEmail: `${prefix}-${String(i).padStart(2, '0')}@example.test`,
				supporterName: `${prefix} ${i}`
			}))
		);
}

async function patientEvent(
	patientId: string,
	kind: (typeof patientEvents.$inferInsert)['kind'],
	payload: Record<string, unknown>
) {
	const [row] = await db()
		.insert(patientEvents)
		.values({ patientId, kind, payload, dedupeKey: `${kind}:${crypto.randomUUID()}` })
		.returning();
	return row;
}

/** A message put straight into the outbox in the given state (not through a fan-out). */
async function message(status: Status, to = 'someone@example.test') {
	const [row] = await db()
		.insert(outbox)
		.values({
			dedupeKey: `test:${crypto.randomUUID()}`,
			category: 'transactional',
			toAddress: to,
			subject: `A ${status} message`,
			html: '<p>Private body of a message</p>',
			text: 'Private body of a message',
			messageId: newMessageId(),
			status,
			attempts: status === 'pending' ? 0 : status === 'sent' ? 1 : 8,
			lastError: status === 'failed' ? '550: mailbox unavailable' : null,
			sentAt: status === 'sent' ? new Date() : null
		})
		.returning();
	return row;
}

const allRows = () => db().select().from(outbox).orderBy(asc(outbox.id));
const auditCount = async () => (await db().select({ n: count() }).from(auditLog))[0].n;

async function rejection(attempt: () => unknown): Promise<unknown> {
	return Promise.resolve()
		.then(attempt)
		.catch((e: unknown) => e);
}

let catcher: Catcher;
let transport: MailTransport;

beforeAll(async () => {
	await setAddress(ADDRESS);
	await db()
		.insert(adoptionLevels)
		.values({ id: LEVEL, slug: 'ripple-o', name: 'Ripple', amountCents: 2500, interval: 'once' });
	await patient(BRISA, 'outbox-brisa', 'Brisa');
	await patient(OLEAJE, 'outbox-oleaje', 'Oleaje');
	await adopters(BRISA, 'brisa', 12);
	await adopters(OLEAJE, 'oleaje', 3);
	catcher = await startCatcher({ database: db });
	transport = createMailTransport({ port: catcher.port });
});

afterAll(async () => {
	transport?.close();
	await catcher?.close();
});

describe('who may use the outbox page', () => {
	it('admin and development staff see it', async () => {
		await message('pending');
		for (const roles of [['admin'], ['development']] as Role[][]) {
			const data = await view('/staff/outbox', await person(roles));
			expect(data.counts.pending).toBeGreaterThanOrEqual(1);
			expect(data.messages.length).toBeGreaterThanOrEqual(1);
		}
	});

	it('supporters, educators and trackers are refused, and their retries change nothing', async () => {
		const failed = await message('failed');
		const before = await allRows();
		const audits = await auditCount();
		for (const role of ['supporter', 'educator', 'tracker'] as Role[]) {
			const user = await person([role]);
			for (const attempt of [
				() => load(request('/staff/outbox', user)),
				() => actions.retry(request('/staff/outbox?/retry', user, { id: String(failed.id) })),
				() => actions.retryAll(request('/staff/outbox?/retryAll', user, {}))
			]) {
				expect(isHttpError(await rejection(attempt), 403), role).toBe(true);
			}
		}
		// Signed out: an action gets 401, not a redirect that a form would follow.
		const visitor = await rejection(() =>
			actions.retryAll(request('/staff/outbox?/retryAll', null, {}))
		);
		expect(isHttpError(visitor, 401)).toBe(true);
		expect(await allRows()).toEqual(before);
		expect(await auditCount()).toBe(audits);
	});

	it('warns while updates are blocked by a missing postal address', async () => {
		const admin = await person(['admin']);
		await setAddress('   ');
		expect((await view('/staff/outbox', admin)).blocked).toBe('postal-address');
		await setAddress(ADDRESS);
		expect((await view('/staff/outbox', admin)).blocked).toBeNull();
	});
});

describe('supporter updates per event', () => {
	let homecoming: typeof patientEvents.$inferSelect;
	let waypoint: typeof patientEvents.$inferSelect;

	it('counts each event’s messages by state, as the worker left them', async () => {
		await db().delete(outbox);
		homecoming = await patientEvent(BRISA, 'released', {
			releaseOn: '2026-11-20',
			publicArea: 'off the north coast'
		});
		waypoint = await patientEvent(OLEAJE, 'waypoint', {
			distanceKm: 512,
			distanceMi: 318,
			cutoffDate: '2026-11-25',
			daysSinceRelease: 9
		});
		expect(await fanOutEvent(homecoming)).toBe(12);
		expect(await fanOutEvent(waypoint)).toBe(3);

		// The worker takes the oldest rows first: Brisa's. Five reach the catcher, then four meet
		// a closed port and, with one attempt allowed, are given up.
		expect(await runOutboxOnce({ database: db(), transport, batchSize: 5 })).toMatchObject({
			sent: 5
		});
		const closed = createMailTransport({ port: 1 });
		expect(
			await runOutboxOnce({ database: db(), transport: closed, batchSize: 4, maxAttempts: 1 })
		).toMatchObject({ failed: 4 });
		closed.close();

		const data = await view('/staff/outbox', await person(['development']));
		expect(data.counts).toEqual({ pending: 6, sent: 5, failed: 4 });
		const brisa = data.events.find((e) => e.id === homecoming.id);
		const oleaje = data.events.find((e) => e.id === waypoint.id);
		expect(brisa).toMatchObject({
			kind: 'released',
			patientName: 'Brisa',
			occurredOn: homecoming.occurredAt.toISOString().slice(0, 10),
			outcome: 'sent',
			recipientCount: 12,
			messages: { pending: 3, sent: 5, failed: 4 }
		});
		expect(oleaje).toMatchObject({
			kind: 'waypoint',
			patientName: 'Oleaje',
			outcome: 'sent',
			recipientCount: 3,
			messages: { pending: 3, sent: 0, failed: 0 }
		});
		// Newest event first.
		expect(data.events.findIndex((e) => e.id === waypoint.id)).toBeLessThan(
			data.events.findIndex((e) => e.id === homecoming.id)
		);
		const [{ caught }] = await db().select({ caught: count() }).from(caughtMail);
		expect(caught).toBe(5);

		// Subjects only: no body, footer or unsubscribe link of anyone's message reaches the page.
		const [sample] = await db()
			.select()
			.from(outbox)
			.where(eq(outbox.patientEventId, homecoming.id))
			.limit(1);
		expect(sample.text).toContain('1 Shore Road');
		const json = JSON.stringify(data);
		expect(json).toContain(sample.subject);
		expect(json).not.toContain('1 Shore Road');
		expect(json).not.toContain('/api/unsubscribe/');
		expect(json).not.toContain('/preferences/');
	});

	it('lists 50 messages a page, newest first, filtered by state from the query string', async () => {
		const admin = await person(['admin']);
		for (let i = 0; i < 55; i++) await message('sent', `paged-${i}@example.test`);

		const sent = await view('/staff/outbox?status=sent', admin);
		expect(sent).toMatchObject({ status: 'sent', page: 1, total: 60, pageCount: 2 });
		expect(sent.messages).toHaveLength(OUTBOX_PAGE_SIZE);
		expect(sent.messages.every((m) => m.status === 'sent')).toBe(true);
		expect(sent.messages[0].to).toBe('paged-54@example.test');

		const second = await view('/staff/outbox?status=sent&page=2', admin);
		expect(second.messages).toHaveLength(10);
		expect(second.messages.every((m) => m.status === 'sent')).toBe(true);

		const failed = await view('/staff/outbox?status=failed', admin);
		expect(failed.total).toBe(4);
		expect(failed.messages.every((m) => m.status === 'failed')).toBe(true);

		const everything = await view('/staff/outbox?status=nonsense&page=0', admin);
		expect(everything).toMatchObject({ status: null, page: 1, total: 70, pageCount: 2 });
		const ids = everything.messages.map((m) => m.id);
		expect(ids).toEqual([...ids].sort((a, b) => b - a));
	});

	it('sends a retried failed message through the worker to the catcher', async () => {
		const admin = await person(['admin']);
		const [failed] = await db()
			.select()
			.from(outbox)
			.where(eq(outbox.status, 'failed'))
			.orderBy(asc(outbox.id))
			.limit(1);
		expect(failed).toMatchObject({ patientEventId: homecoming.id, attempts: 1 });
		expect(failed.lastError).toMatch(/ECONNREFUSED/);

		const result = await actions.retry(
			request('/staff/outbox?/retry', admin, { id: String(failed.id) })
		);
		expect(result).toEqual({ done: `Message ${failed.id} is queued again.` });
		const [queued] = await db().select().from(outbox).where(eq(outbox.id, failed.id));
		expect(queued).toMatchObject({
			status: 'pending',
			attempts: 1,
			lastError: failed.lastError,
			lockedUntil: null
		});
		expect(queued.nextAttemptAt.getTime()).toBeGreaterThanOrEqual(failed.nextAttemptAt.getTime());
		const [entry] = await db()
			.select()
			.from(auditLog)
			.where(eq(auditLog.subject, String(failed.id)));
		expect(entry).toMatchObject({ actorId: admin.id, action: 'mail.retried' });

		const counts = (await view('/staff/outbox', admin)).events.find(
			(e) => e.id === homecoming.id
		)?.messages;
		expect(counts).toEqual({ pending: 4, sent: 5, failed: 3 });

		for (let i = 0; i < 10; i++) {
			const run = await runOutboxOnce({ database: db(), transport, batchSize: 50 });
			if (run.claimed === 0) break;
		}
		const [after] = await db().select().from(outbox).where(eq(outbox.id, failed.id));
		expect(after).toMatchObject({ status: 'sent', attempts: 2, lastError: null });
		const copies = await db()
			.select({ to: caughtMail.envelopeTo })
			.from(caughtMail)
			.where(eq(caughtMail.messageId, failed.messageId));
		expect(copies).toEqual([{ to: [failed.toAddress] }]);
	});

	it('puts every failed message back with “Retry all failed”, attempts kept', async () => {
		const development = await person(['development']);
		const failed = await db()
			.select()
			.from(outbox)
			.where(eq(outbox.status, 'failed'))
			.orderBy(asc(outbox.id));
		expect(failed).toHaveLength(3);
		const result = await actions.retryAll(request('/staff/outbox?/retryAll', development, {}));
		expect(result).toEqual({ done: '3 failed messages are queued again.' });
		const rows = await db()
			.select()
			.from(outbox)
			.where(
				inArray(
					outbox.id,
					failed.map((f) => f.id)
				)
			)
			.orderBy(asc(outbox.id));
		expect(rows.map((r) => [r.id, r.status, r.attempts, r.lastError, r.lockedUntil])).toEqual(
			failed.map((f) => [f.id, 'pending', f.attempts, f.lastError, null])
		);
		expect((await view('/staff/outbox', development)).counts.failed).toBe(0);
		expect(await actions.retryAll(request('/staff/outbox?/retryAll', development, {}))).toEqual({
			done: 'There were no failed messages to retry.'
		});
	});

	it('refuses to retry a message that is not failed, or does not exist, and changes nothing', async () => {
		const admin = await person(['admin']);
		const sent = await message('sent');
		const pending = await message('pending');
		const before = await allRows();
		const audits = await auditCount();
		const cases: [string, number, RegExp][] = [
			[String(sent.id), 409, /already sent; only failed messages can be retried/],
			[String(pending.id), 409, /still queued; only failed messages can be retried/],
			['2147483000', 404, /There is no message 2147483000/],
			['abc', 400, /Choose a message to retry/],
			['-3', 400, /Choose a message to retry/],
			['1.5', 400, /Choose a message to retry/],
			['99999999999999', 400, /Choose a message to retry/]
		];
		for (const [id, status, text] of cases) {
			const result = await actions.retry(request('/staff/outbox?/retry', admin, { id }));
			expect(isActionFailure(result), id).toBe(true);
			const failure = result as { status: number; data: { errors: { id: string } } };
			expect(failure.status, id).toBe(status);
			expect(failure.data.errors.id, id).toMatch(text);
		}
		const missing = await actions.retry(request('/staff/outbox?/retry', admin, {}));
		expect(isActionFailure(missing)).toBe(true);
		expect(await allRows()).toEqual(before);
		expect(await auditCount()).toBe(audits);
	});
});
