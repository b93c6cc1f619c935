import { eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { caughtMail, outbox } from '$lib/server/db/schema';
import { startCatcher, type Catcher } from '$lib/server/mail/catcher';
import { enqueueMail, type OutgoingMail } from '$lib/server/mail/outbox';
import { createMailTransport, type MailTransport } from '$lib/server/mail/transport';
import { retryDelayMs, runOutboxOnce, type OutboxRunOptions } from '$lib/server/mail/worker';
import { useTestDatabase } from '../setup/test-db';
import { startSmtpStub, type SmtpStub } from './smtp-stub';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

let catcher: Catcher;
let toCatcher: MailTransport;
let stub: SmtpStub;
let toStub: MailTransport;

beforeAll(async () => {
	catcher = await startCatcher({ database: db });
	toCatcher = createMailTransport({ port: catcher.port });
	stub = await startSmtpStub();
	toStub = createMailTransport({ port: stub.port });
});

afterAll(async () => {
	toCatcher?.close();
	toStub?.close();
	await catcher?.close();
	await stub?.close();
});

beforeEach(async () => {
	await db().delete(outbox);
	await db().delete(caughtMail);
	stub.delivered.length = 0;
	stub.replies.rcpt = undefined;
	stub.replies.data = undefined;
});

function mail(n: number, overrides: Partial<OutgoingMail> = {}): OutgoingMail {
	return {
		dedupeKey: `test:${n}`,
		category: 'transactional',
		to: `supporter${n}@tideward.test`,
		subject: `Message ${n}`,
		html: `<p>Message ${n}</p>`,
		text: `Message ${n}`,
		...overrides
	};
}

function run(options: OutboxRunOptions = {}) {
	return runOutboxOnce({ database: db(), transport: toCatcher, random: () => 0.5, ...options });
}

async function row(dedupeKey = 'test:1') {
	const [found] = await db().select().from(outbox).where(eq(outbox.dedupeKey, dedupeKey));
	return found;
}

describe('enqueueMail', () => {
	it('queues one message per dedupe key', async () => {
		expect(await enqueueMail(db(), mail(1))).toBe(true);
		expect(await enqueueMail(db(), mail(1, { subject: 'Another try' }))).toBe(false);
		const rows = await db().select().from(outbox);
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({ subject: 'Message 1', status: 'pending', attempts: 0 });
		expect(rows[0].messageId).toMatch(/^<[0-9a-f-]{36}@tideward\.test>$/);
	});

	it('queues nothing when the transaction rolls back', async () => {
		await expect(
			db().transaction(async (tx) => {
				await enqueueMail(tx, mail(1));
				throw new Error('the change that caused the mail failed');
			})
		).rejects.toThrow(/caused the mail failed/);
		expect(await db().select().from(outbox)).toEqual([]);
	});
});

describe('runOutboxOnce', () => {
	it('sends a queued message with its own Message-ID and marks it sent', async () => {
		await enqueueMail(
			db(),
			mail(1, { headers: { 'List-Unsubscribe': '<http://127.0.0.1:3000/u/1>' } })
		);
		const queued = await row();

		expect(await run()).toEqual({ claimed: 1, sent: 1, retrying: 0, failed: 0, skipped: 0 });

		const sent = await row();
		expect(sent).toMatchObject({ status: 'sent', attempts: 1, lockedUntil: null, lastError: null });
		expect(sent.sentAt).toBeInstanceOf(Date);
		const caught = await db().select().from(caughtMail);
		expect(caught).toHaveLength(1);
		expect(caught[0]).toMatchObject({
			messageId: queued.messageId,
			subject: 'Message 1',
			envelopeTo: ['supporter1@tideward.test']
		});
		expect(caught[0].headers['list-unsubscribe']).toBe('<http://127.0.0.1:3000/u/1>');

		expect(await run()).toMatchObject({ claimed: 0, sent: 0 });
		expect(await db().select().from(caughtMail)).toHaveLength(1);
	});

	it('leaves mail that is not due yet alone', async () => {
		await enqueueMail(db(), mail(1));
		await db()
			.update(outbox)
			.set({ nextAttemptAt: sql`now() + interval '5 minutes'` });
		expect(await run()).toMatchObject({ claimed: 0 });
		expect(await row()).toMatchObject({ status: 'pending', attempts: 0 });
	});

	it.each([
		['RCPT TO', 'rcpt'],
		['DATA', 'data']
	] as const)('retries later after a 451 answer to %s', async (_label, step) => {
		stub.replies[step] = { code: 451, message: 'Greylisted, try again later' };
		await enqueueMail(db(), mail(1));
		const before = (await row()).createdAt;

		expect(await run({ transport: toStub })).toMatchObject({ claimed: 1, retrying: 1, sent: 0 });

		const after = await row();
		expect(after).toMatchObject({ status: 'pending', attempts: 1, lockedUntil: null });
		expect(after.lastError).toMatch(/451 Greylisted/);
		// First retry: half of 30 s fixed plus half random (0.5 here) = 22.5 s.
		const waitMs = after.nextAttemptAt.getTime() - before.getTime();
		expect(waitMs).toBeGreaterThanOrEqual(22_000);
		expect(waitMs).toBeLessThan(30_000);
		expect(stub.delivered).toEqual([]);

		expect(await run({ transport: toStub })).toMatchObject({ claimed: 0 });
	});

	it('retries after a connection failure', async () => {
		const closed = await startSmtpStub();
		await closed.close();
		const nowhere = createMailTransport({ port: closed.port });
		await enqueueMail(db(), mail(1));
		expect(await run({ transport: nowhere })).toMatchObject({ retrying: 1 });
		expect(await row()).toMatchObject({ status: 'pending', attempts: 1 });
		nowhere.close();
	});

	it('fails a message at once on a permanent 550', async () => {
		stub.replies.rcpt = { code: 550, message: 'No such mailbox here' };
		await enqueueMail(db(), mail(1));

		expect(await run({ transport: toStub })).toMatchObject({ failed: 1, retrying: 0 });

		const after = await row();
		expect(after).toMatchObject({ status: 'failed', attempts: 1, lockedUntil: null });
		expect(after.lastError).toMatch(/550 No such mailbox here/);
		expect(await run({ transport: toStub })).toMatchObject({ claimed: 0 });
	});

	it('gives up after the last allowed attempt', async () => {
		stub.replies.data = { code: 452, message: 'Mailbox full' };
		await enqueueMail(db(), mail(1));
		await db().update(outbox).set({ attempts: 7 });

		expect(await run({ transport: toStub, maxAttempts: 8 })).toMatchObject({ failed: 1 });
		expect(await row()).toMatchObject({ status: 'failed', attempts: 8 });
	});

	it('sends again a row whose worker died (lease expired), not one still leased', async () => {
		await enqueueMail(db(), mail(1));
		await enqueueMail(db(), mail(2));
		await db()
			.update(outbox)
			.set({ lockedUntil: sql`now() - interval '1 minute'` })
			.where(eq(outbox.dedupeKey, 'test:1'));
		await db()
			.update(outbox)
			.set({ lockedUntil: sql`now() + interval '1 minute'` })
			.where(eq(outbox.dedupeKey, 'test:2'));

		expect(await run()).toMatchObject({ claimed: 1, sent: 1 });
		expect(await row('test:1')).toMatchObject({ status: 'sent' });
		expect(await row('test:2')).toMatchObject({ status: 'pending', attempts: 0 });
	});

	it('drops a crash-repeat at the catcher: a resend keeps the Message-ID', async () => {
		await enqueueMail(db(), mail(1));
		await run();
		// As if the process died after sending but before recording it.
		await db().update(outbox).set({ status: 'pending', sentAt: null });
		expect(await run()).toMatchObject({ sent: 1 });
		expect(await db().select().from(caughtMail)).toHaveLength(1);
	});

	it('sends each message exactly once when two workers race', async () => {
		const count = 12;
		for (let n = 1; n <= count; n++) await enqueueMail(db(), mail(n));
		const ids = (await db().select({ id: outbox.messageId }).from(outbox)).map((r) => r.id);

		// Each worker's first send waits until the other worker has claimed a batch too, so two
		// leases are held at once whatever the scheduling: on a PostgreSQL server one worker could
		// otherwise send everything before the other's connection is open.
		let waiting = 0;
		let release!: () => void;
		const bothClaimed = new Promise<void>((resolve) => (release = resolve));
		async function worker() {
			let first = true;
			const transport = {
				sendMail: async (message: unknown) => {
					if (first) {
						first = false;
						if (++waiting === 2) release();
						await bothClaimed;
					}
					return toStub.sendMail(message as never);
				}
			} as unknown as MailTransport;
			let sent = 0;
			try {
				for (;;) {
					const result = await run({ transport, batchSize: 3 });
					sent += result.sent;
					if (result.claimed === 0) return sent;
				}
			} finally {
				// A worker that found nothing to claim must not keep the other one waiting.
				release();
			}
		}
		const [a, b] = await Promise.all([worker(), worker()]);

		expect(a + b).toBe(count);
		expect(a).toBeGreaterThan(0);
		expect(b).toBeGreaterThan(0);
		expect([...stub.delivered].sort()).toEqual([...ids].sort());
		const statuses = await db().select({ status: outbox.status }).from(outbox);
		expect(statuses.every((s) => s.status === 'sent')).toBe(true);
	});
});

describe('retryDelayMs', () => {
	it('doubles from 30 s, stays within its jitter band and stops at an hour', () => {
		expect(retryDelayMs(1, () => 0)).toBe(15_000);
		expect(retryDelayMs(1, () => 1)).toBe(30_000);
		expect(retryDelayMs(2, () => 0)).toBe(30_000);
		expect(retryDelayMs(3, () => 1)).toBe(120_000);
		expect(retryDelayMs(20, () => 1)).toBe(3_600_000);
		expect(retryDelayMs(20, () => 0)).toBe(1_800_000);
	});
});
