import { eq } from 'drizzle-orm';
import { afterAll, describe, expect, it } from 'vitest';
import { caughtMail, outbox } from '$lib/server/db/schema';
import { enqueueMail } from '$lib/server/mail/outbox';
import { mailMode, startMail, stopMail } from '$lib/server/mail/service';
import { mailTransport } from '$lib/server/mail/transport';
import { kickOutbox, startOutboxWorker } from '$lib/server/mail/worker';
import { useTestDatabase } from '../setup/test-db';

delete process.env.SMTP_URL;
delete process.env.SMTP_CATCHER_PORT;
delete process.env.MAIL_WORKER;
const db = useTestDatabase();

afterAll(async () => {
	await stopMail();
});

async function waitFor<T>(probe: () => Promise<T | undefined>, ms = 5_000): Promise<T> {
	const end = Date.now() + ms;
	for (;;) {
		const value = await probe();
		if (value !== undefined) return value;
		if (Date.now() > end) throw new Error('timed out');
		await new Promise((r) => setTimeout(r, 25));
	}
}

describe('startMail / stopMail', () => {
	it('starts the catcher and the loop once, and a kick delivers queued mail', async () => {
		const first = await startMail();
		expect(first.mode).toBe('catcher');
		expect(first.catcherPort).toBeGreaterThan(0);
		expect(await startMail()).toEqual(first);
		expect(await mailMode()).toBe('catcher');

		await enqueueMail(db(), {
			dedupeKey: 'service:1',
			category: 'transactional',
			to: 'ana@tideward.test',
			subject: 'Through the loop',
			html: '<p>Hello</p>',
			text: 'Hello'
		});
		kickOutbox();

		const caught = await waitFor(async () => {
			const [row] = await db()
				.select()
				.from(caughtMail)
				.where(eq(caughtMail.subject, 'Through the loop'));
			return row;
		});
		expect(caught.envelopeTo).toEqual(['ana@tideward.test']);
		const [queued] = await db().select().from(outbox).where(eq(outbox.dedupeKey, 'service:1'));
		expect(queued.messageId).toBe(caught.messageId);
		await waitFor(async () => {
			const [row] = await db().select().from(outbox).where(eq(outbox.dedupeKey, 'service:1'));
			return row.status === 'sent' ? row : undefined;
		});
	});

	it('stops the transport and can start again on a new port', async () => {
		await stopMail();
		expect(await mailMode()).toBeUndefined();
		expect(() => mailTransport()).toThrow(/startMail/);
		const again = await startMail();
		expect(again.mode).toBe('catcher');
		await stopMail();
	});

	it('does not start the loop with MAIL_WORKER=off', () => {
		process.env.MAIL_WORKER = 'off';
		try {
			expect(startOutboxWorker()).toBe(false);
		} finally {
			delete process.env.MAIL_WORKER;
		}
	});
});
