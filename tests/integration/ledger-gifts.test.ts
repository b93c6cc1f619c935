// The Ledger's gift queries on their own: export batches that never skip or repeat a gift (keyset
// paging across equal times), failed renewals included, and manual gifts with their receipts.
import { count, eq } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import {
	adoptionLevels,
	adoptions,
	gifts,
	outbox,
	patients,
	receipts,
	users
} from '$lib/server/db/schema';
import {
	giftsInBatches,
	listGifts,
	giftQuery,
	ManualGiftRefused,
	patientTotals,
	recordManualGift
} from '$lib/server/ledger/gifts';
import { receiptText } from '$lib/server/ledger/gift-receipts';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const STAFF = crypto.randomUUID();
const PATIENT = crypto.randomUUID();
const LEVEL = crypto.randomUUID();
const ADOPTION = crypto.randomUUID();
const SAME_TIME = new Date('2026-06-01T12:00:00Z');

beforeAll(async () => {
	await db()
		.insert(users)
		.values([
			{ id: STAFF, email: 'ledger.staff@example.test', name: 'Ledger Staff' },
			{ id: crypto.randomUUID(), email: 'cheque.giver@example.test', name: 'Cheque Giver' }
		]);
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'ledger-test',
		name: 'Arena',
		species: 'hawksbill',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'boat_strike',
		status: 'admitted'
	});
	await db()
		.insert(adoptionLevels)
		.values({ id: LEVEL, slug: 'swell-l', name: 'Swell', amountCents: 1500, interval: 'month' });
	await db().insert(adoptions).values({
		id: ADOPTION,
		patientId: PATIENT,
		levelId: LEVEL,
		kind: 'self',
		status: 'active',
		interval: 'month',
		amountCents: 1500,
		currency: 'usd',
		supporterEmail: 'monthly@example.test',
		supporterName: 'Monthly Giver'
	});
	// Seven gifts paid at the very same moment, and a failed renewal with no payment date.
	await db()
		.insert(gifts)
		.values(
			Array.from({ length: 7 }, (_, i) => ({
				id: `g-${i}`,
				adoptionId: ADOPTION,
				status: 'paid' as const,
				amountCents: 1500,
				currency: 'usd',
				paymentIntentId: `pi_${i}`,
				paidAt: SAME_TIME
			}))
		);
	await db().insert(gifts).values({
		id: 'g-failed',
		adoptionId: ADOPTION,
		status: 'failed',
		amountCents: 1500,
		currency: 'usd',
		failureMessage: 'Your card was declined.'
	});
});

describe('giftsInBatches', () => {
	it('walks every gift once, in small batches, even when many share one time', async () => {
		const seen: string[] = [];
		const sizes: number[] = [];
		for await (const batch of giftsInBatches({}, 3)) {
			sizes.push(batch.length);
			seen.push(...batch.map((g) => g.id));
		}
		expect(seen.sort()).toEqual(
			[...Array.from({ length: 7 }, (_, i) => `g-${i}`), 'g-failed'].sort()
		);
		expect(Math.max(...sizes)).toBeLessThanOrEqual(3);
	});

	it('applies the same filters as the table', async () => {
		const failed: string[] = [];
		for await (const batch of giftsInBatches({ status: 'failed' }, 2))
			failed.push(...batch.map((g) => g.id));
		expect(failed).toEqual(['g-failed']);
		const page = await listGifts(giftQuery.parse({ status: 'paid', pageSize: '5' }));
		expect(page).toMatchObject({ total: 7, pageCount: 2 });
		expect(page.rows).toHaveLength(5);
		expect(page.totals.amountCents).toBe(7 * 1500);
	});

	it('counts adoptions and net gifts per patient', async () => {
		const [arena] = (await patientTotals()).filter((p) => p.patientId === PATIENT);
		expect(arena).toMatchObject({ activeAdoptions: 1, adoptions: 1, giftCents: 7 * 1500 });
	});
});

describe('recordManualGift', () => {
	const base = {
		supporterEmail: 'Cheque.Giver@example.test',
		amount: 30000,
		receivedOn: '2026-11-30',
		method: 'cheque' as const,
		reference: '004417'
	};
	const now = new Date('2026-12-02T10:00:00Z');

	it('records the gift with a receipt that names the cheque, and e-mails it', async () => {
		const { giftId, receipt } = await recordManualGift(base, STAFF, now);
		const [gift] = await db().select().from(gifts).where(eq(gifts.id, giftId));
		expect(gift).toMatchObject({
			source: 'manual',
			method: 'cheque',
			reference: '004417',
			donorEmail: 'cheque.giver@example.test',
			donorName: 'Cheque Giver',
			status: 'paid',
			amountCents: 30000,
			adoptionId: null
		});
		expect(receipt).toMatchObject({ amountCents: 30000, deductibleCents: 30000 });
		expect(receipt!.description).toBe('Gift by cheque (reference 004417)');
		// $300 is over $250: IRS Publication 1771 asks for the goods statement, here "none".
		expect(await receiptText(db(), receipt!)).toContain('No goods or services were provided');
		const mail = await db()
			.select()
			.from(outbox)
			.where(eq(outbox.toAddress, 'cheque.giver@example.test'));
		expect(mail).toHaveLength(1);
		expect(mail[0].subject).toContain('receipt No.');
	});

	it('refuses a future date or an unknown supporter, and writes nothing', async () => {
		const before = await Promise.all([
			db().select({ n: count() }).from(gifts),
			db().select({ n: count() }).from(receipts)
		]);
		await expect(
			recordManualGift({ ...base, receivedOn: '2026-12-03' }, STAFF, now)
		).rejects.toMatchObject({
			field: 'receivedOn'
		});
		await expect(
			recordManualGift({ ...base, supporterEmail: 'stranger@example.test' }, STAFF, now)
		).rejects.toBeInstanceOf(ManualGiftRefused);
		const after = await Promise.all([
			db().select({ n: count() }).from(gifts),
			db().select({ n: count() }).from(receipts)
		]);
		expect(after).toEqual(before);
	});
});
