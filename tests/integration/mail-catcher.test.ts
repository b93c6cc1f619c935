import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { caughtMail } from '$lib/server/db/schema';
import { startCatcher, type Catcher } from '$lib/server/mail/catcher';
import { createMailTransport, type MailTransport } from '$lib/server/mail/transport';
import { isTransient } from '$lib/server/mail/worker';
import { useTestDatabase } from '../setup/test-db';
import { createLogger, setLogger } from '$lib/server/log';
import { Writable } from 'node:stream';

const db = useTestDatabase();

let catcher: Catcher;
let transport: MailTransport;

beforeAll(async () => {
	catcher = await startCatcher({ database: db });
	transport = createMailTransport({ port: catcher.port });
});

afterAll(async () => {
	transport?.close();
	await catcher?.close();
});

beforeEach(async () => {
	await db().delete(caughtMail);
});

const message = {
	from: 'Tideward <no-reply@tideward.test>',
	to: 'ana@tideward.test',
	subject: 'A waypoint for Pebble',
	html: '<p>Pebble has swum <strong>500 km</strong>.</p>',
	text: 'Pebble has swum 500 km.',
	messageId: '<waypoint-1@tideward.test>',
	headers: {
		'List-Unsubscribe': '<http://127.0.0.1:3000/unsubscribe/abc>',
		'List-Unsubscribe-Post': 'List-Unsubscribe=One-Click'
	}
};

describe('mail catcher', () => {
	it('listens on 127.0.0.1 on the port it reports', () => {
		expect(catcher.port).toBeGreaterThan(0);
	});

	it('stores a message sent over SMTP, parsed', async () => {
		const info = await transport.sendMail({
			...message,
			envelope: { from: 'bounce@tideward.test', to: ['ana@tideward.test', 'ben@tideward.test'] }
		});
		expect(info.accepted).toEqual(['ana@tideward.test', 'ben@tideward.test']);

		const rows = await db().select().from(caughtMail);
		expect(rows).toHaveLength(1);
		const [row] = rows;
		expect(row.messageId).toBe('<waypoint-1@tideward.test>');
		expect(row.envelopeFrom).toBe('bounce@tideward.test');
		expect(row.envelopeTo).toEqual(['ana@tideward.test', 'ben@tideward.test']);
		expect(row.subject).toBe('A waypoint for Pebble');
		expect(row.html).toContain('<strong>500 km</strong>');
		expect(row.text?.trim()).toBe('Pebble has swum 500 km.');
		expect(row.headers['list-unsubscribe']).toBe('<http://127.0.0.1:3000/unsubscribe/abc>');
		expect(row.headers['list-unsubscribe-post']).toBe('List-Unsubscribe=One-Click');
		expect(row.headers['message-id']).toBe('<waypoint-1@tideward.test>');
		expect(row.headers.to).toBe('ana@tideward.test');
		expect(row.headers).not.toHaveProperty('content-type');
		expect(row.raw).toMatch(/^Subject: A waypoint for Pebble\r?$/m);
	});

	it('accepts but drops a second copy with the same Message-ID', async () => {
		await transport.sendMail(message);
		const again = await transport.sendMail({ ...message, subject: 'Resent after a crash' });
		expect(again.accepted).toEqual(['ana@tideward.test']);
		await transport.sendMail({ ...message, messageId: '<waypoint-2@tideward.test>' });

		const rows = await db().select().from(caughtMail).orderBy(caughtMail.id);
		expect(rows.map((r) => [r.messageId, r.subject])).toEqual([
			['<waypoint-1@tideward.test>', 'A waypoint for Pebble'],
			['<waypoint-2@tideward.test>', 'A waypoint for Pebble']
		]);
	});

	it('answers 451 when it cannot store, so the sender keeps the message', async () => {
		const lines: { msg?: string; err?: { message?: string } }[] = [];
		setLogger(
			createLogger(
				new Writable({
					write(chunk, _encoding, done) {
						lines.push(JSON.parse(String(chunk)));
						done();
					}
				})
			)
		);
		const broken = await startCatcher({
			database: () => {
				throw new Error('database is down');
			}
		});
		const to = createMailTransport({ port: broken.port });
		try {
			const error = await to.sendMail(message).then(
				() => undefined,
				(e: unknown) => e
			);
			expect(error).toMatchObject({ responseCode: 451 });
			expect(isTransient(error)).toBe(true);
			expect(lines).toContainEqual(
				expect.objectContaining({
					msg: 'mail catcher could not store a message',
					err: expect.objectContaining({ message: 'database is down' })
				})
			);
		} finally {
			to.close();
			await broken.close();
			setLogger(undefined);
		}
		expect(await db().select().from(caughtMail)).toEqual([]);
	});
});
