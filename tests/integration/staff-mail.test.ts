import { isHttpError, isRedirect } from '@sveltejs/kit';
import { eq, sql } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Role } from '$lib/roles';
import { auditLog, caughtMail, outbox, users } from '$lib/server/db/schema';
import { actions, load as listLoad } from '../../src/routes/staff/mail/+page.server';
import { load as detailLoad } from '../../src/routes/staff/mail/[id]/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

function event(path: string, user: SessionUser | null, method = 'GET', params = {}) {
	const url = new URL(`http://localhost${path}`);
	return {
		request: new Request(url, { method, body: method === 'POST' ? new FormData() : undefined }),
		url,
		locals: { user, session: null, requestId: 'test' },
		params,
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@tideward.test`;
	await db().insert(users).values({ id, email, name: 'Rui Shoal' });
	return { id, email, name: 'Rui Shoal', roles };
}

type ListData = {
	page: number;
	pageCount: number;
	total: number;
	messages: { id: number; to: string; subject: string }[];
};

async function caught(n: number, to = 'ana@tideward.test') {
	const [row] = await db()
		.insert(caughtMail)
		.values({
			messageId: `<m${n}@tideward.test>`,
			envelopeFrom: 'no-reply@tideward.test',
			envelopeTo: [to],
			subject: `Message ${n}`,
			html: `<p>Message ${n}</p>`,
			text: `Message ${n}`,
			headers: { 'list-unsubscribe': '<http://127.0.0.1:3000/u/1>' },
			raw: `Subject: Message ${n}\r\n\r\nMessage ${n}`,
			receivedAt: sql`now() + ${n}::integer * interval '1 second'`
		})
		.returning({ id: caughtMail.id });
	return row.id;
}

describe('caught mail pages', () => {
	it('are for admins only', async () => {
		const educator = await person(['educator']);
		for (const attempt of [
			() => listLoad(event('/staff/mail', educator)),
			() => detailLoad(event('/staff/mail/1', educator, 'GET', { id: '1' })),
			() => actions.sendTest(event('/staff/mail?/sendTest', educator, 'POST'))
		]) {
			const error = await Promise.resolve()
				.then(attempt)
				.catch((e: unknown) => e);
			expect(isHttpError(error, 403)).toBe(true);
		}
		const visitor = await Promise.resolve()
			.then(() => listLoad(event('/staff/mail', null)))
			.catch((e: unknown) => e);
		expect(isRedirect(visitor)).toBe(true);
	});

	it('lists 50 a page, newest first', async () => {
		const admin = await person(['admin']);
		for (let n = 1; n <= 55; n++) await caught(n);

		const first = (await listLoad(event('/staff/mail', admin))) as ListData;
		expect(first).toMatchObject({ page: 1, pageCount: 2, total: 55 });
		expect(first.messages).toHaveLength(50);
		expect(first.messages[0]).toMatchObject({ subject: 'Message 55', to: 'ana@tideward.test' });

		const second = (await listLoad(event('/staff/mail?page=2', admin))) as ListData;
		expect(second.messages.map((m) => m.subject)).toEqual([
			'Message 5',
			'Message 4',
			'Message 3',
			'Message 2',
			'Message 1'
		]);
	});

	it('shows one message, and 404 for an unknown one', async () => {
		const admin = await person(['admin']);
		const id = await caught(100, admin.email);
		const data = (await detailLoad(
			event(`/staff/mail/${id}`, admin, 'GET', { id: String(id) })
		)) as {
			message: { subject: string; headers: [string, string][]; html: string; text: string };
			addressedToMe: boolean;
		};
		expect(data.message).toMatchObject({ subject: 'Message 100', text: 'Message 100' });
		expect(data.message.headers).toEqual([['list-unsubscribe', '<http://127.0.0.1:3000/u/1>']]);
		expect(data.addressedToMe).toBe(true);

		for (const bad of ['999999', 'abc', '-1']) {
			const error = await Promise.resolve()
				.then(() => detailLoad(event(`/staff/mail/${bad}`, admin, 'GET', { id: bad })))
				.catch((e: unknown) => e);
			expect(isHttpError(error, 404)).toBe(true);
		}
	});

	it('queues a test message to the signed-in admin', async () => {
		const admin = await person(['admin']);
		const result = await actions.sendTest(event('/staff/mail?/sendTest', admin, 'POST'));
		expect(result).toEqual({ sentTo: admin.email });

		const [queued] = await db().select().from(outbox).where(eq(outbox.toAddress, admin.email));
		expect(queued).toMatchObject({ status: 'pending', category: 'transactional' });
		expect(queued.subject).toMatch(/^Test message from /);
		expect(queued.text).toContain('Hello Rui Shoal,');
		const [entry] = await db().select().from(auditLog).where(eq(auditLog.actorId, admin.id));
		expect(entry.action).toBe('mail.test_sent');

		await actions.sendTest(event('/staff/mail?/sendTest', admin, 'POST'));
		const all = await db().select().from(outbox).where(eq(outbox.toAddress, admin.email));
		expect(all).toHaveLength(2);
	});
});
