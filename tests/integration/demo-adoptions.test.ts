// The demo's adoptions go through the same Checkout and webhook path as a visitor's: paid on the
// local test payment service, then made active by its signed events, with receipts and e-mails.
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedDemo } from '$lib/server/db/seed/demo';
import { ensureDemoAdoptions } from '$lib/server/demo-adoptions';
import { adoptions, gifts, outbox, receipts } from '$lib/server/db/schema';
import { useTestDatabase } from '../setup/test-db';
import { startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
let processor: TestProcessor;

beforeAll(async () => {
	processor = await startTestProcessor('demo-adoptions');
	await seedDemo(db());
});
afterAll(() => processor?.stop());

describe('ensureDemoAdoptions', () => {
	it('pays three adoptions once, each becoming active with a gift, a receipt and a thank-you', async () => {
		expect(await ensureDemoAdoptions()).toBe(3);
		await processor.fake.flushWebhooks();
		const rows = await db().select().from(adoptions);
		expect(rows.map((a) => [a.kind, a.status]).sort()).toEqual([
			['classroom', 'active'],
			['gift', 'active'],
			['self', 'active']
		]);
		const [{ n: giftCount }] = await db().select({ n: count() }).from(gifts);
		const [{ n: receiptCount }] = await db().select({ n: count() }).from(receipts);
		expect([giftCount, receiptCount]).toEqual([3, 3]);
		// The gift's recipient is told at once (no delivery date was set).
		const notices = await db()
			.select()
			.from(outbox)
			.where(eq(outbox.toAddress, 'ines.gift@tideward.test'));
		expect(notices).toHaveLength(1);

		expect(await ensureDemoAdoptions()).toBe(0);
		const [{ n }] = await db().select({ n: count() }).from(adoptions);
		expect(n).toBe(3);
	});
});
