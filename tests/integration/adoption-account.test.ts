// What follows a payment, through the official SDK against the local fake processor with events
// over loopback HTTP: receipts and the thank-you e-mail, corrected receipts after a refund, gift
// notices on the delivery date and claiming a gift, changing a monthly gift, cancellation at the
// end of the paid month, failed renewals, e-mail choices and "the patient who needs it most".
import { isActionFailure } from '@sveltejs/kit';
import { and, asc, count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { accountAdoptions } from '$lib/server/adoptions/account';
import { patientMostInNeed, startCheckout } from '$lib/server/adoptions/checkout';
import { claimGift, deliverDueGiftNotices, giftForClaim } from '$lib/server/adoptions/gifts';
import {
	applySubscriptionState,
	ChangeRefused,
	changeMonthlyGift
} from '$lib/server/adoptions/subscriptions';
import {
	adoptionLevels,
	adoptions,
	gifts,
	outbox,
	patients,
	receipts,
	users
} from '$lib/server/db/schema';
import { formatReceiptNumber } from '$lib/server/ledger/receipts';
import { getPreferences } from '$lib/server/mail/preferences';
import { stripe } from '$lib/server/payments/client';
import {
	advanceClock,
	cancelSubscription,
	listEvents,
	payCheckoutSession,
	redeliver,
	refund,
	type FakeStripe
} from '$lib/server/payments/fake';
import { actions as accountActions } from '../../src/routes/account/+page.server';
import { GET as downloadReceipt } from '../../src/routes/account/receipts/[id]/receipt.pdf/+server';
import { useTestDatabase } from '../setup/test-db';
import { startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

let processor: TestProcessor;
let fake: FakeStripe;
const PATIENT = crypto.randomUUID();
const QUIET_PATIENT = crypto.randomUUID();
const RIPPLE = crypto.randomUUID();
const SWELL = crypto.randomUUID();
const TIDE = crypto.randomUUID();

async function person(name = 'A Reader'): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@example.test`;
	await db().insert(users).values({ id, email, name, emailVerified: true });
	return { id, email, name, roles: ['supporter'] };
}

interface AdoptOptions {
	supporter?: SessionUser;
	amountCents?: number;
	card?: string;
	gift?: { name: string; email: string; deliverOn?: string; message?: string };
}

/** An adoption paid on the fake checkout page, its events applied. */
async function adopt(levelId: string, options: AdoptOptions = {}) {
	const attemptId = crypto.randomUUID();
	const supporter = options.supporter ?? (await person());
	const [level] = await db().select().from(adoptionLevels).where(eq(adoptionLevels.id, levelId));
	const { url } = await startCheckout({
		attemptId,
		patientId: PATIENT,
		levelId,
		amountCents: options.amountCents ?? level.amountCents,
		kind: options.gift ? 'gift' : 'self',
		supporter: { id: supporter.id, email: supporter.email, name: supporter.name },
		recipientName: options.gift?.name,
		recipientEmail: options.gift?.email,
		deliverOn: options.gift?.deliverOn,
		giftMessage: options.gift?.message
	});
	const paid = payCheckoutSession(url.split('/').at(-1)!, {
		cardNumber: options.card ?? '4242424242424242'
	});
	expect(paid.ok).toBe(true);
	await fake.flushWebhooks();
	return { adoptionId: attemptId, supporter };
}

const adoptionRow = async (id: string) =>
	(await db().select().from(adoptions).where(eq(adoptions.id, id)))[0];

const giftRows = (adoptionId: string) =>
	db().select().from(gifts).where(eq(gifts.adoptionId, adoptionId)).orderBy(asc(gifts.paidAt));

const receiptsOf = async (adoptionId: string) =>
	db()
		.select({
			id: receipts.id,
			number: receipts.number,
			status: receipts.status,
			kind: receipts.kind,
			replacesId: receipts.replacesId,
			amountCents: receipts.amountCents,
			deductibleCents: receipts.deductibleCents,
			fairMarketValueCents: receipts.fairMarketValueCents
		})
		.from(receipts)
		.innerJoin(gifts, eq(gifts.id, receipts.giftId))
		.where(eq(gifts.adoptionId, adoptionId))
		.orderBy(asc(receipts.number));

const mailTo = (address: string) =>
	db().select().from(outbox).where(eq(outbox.toAddress, address)).orderBy(asc(outbox.id));

function receiptDownload(user: SessionUser, id: string) {
	const url = new URL(`http://localhost/account/receipts/${id}/receipt.pdf`);
	return downloadReceipt({
		request: new Request(url),
		url,
		params: { id },
		locals: { user, session: null, requestId: 'test' }
	} as never);
}

function accountEvent(user: SessionUser, form: Record<string, string>) {
	const body = new FormData();
	for (const [key, value] of Object.entries(form)) body.append(key, value);
	const url = new URL('http://localhost/account');
	return {
		request: new Request(url, { method: 'POST', body }),
		url,
		locals: { user, session: null, requestId: 'test' },
		params: {},
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

beforeAll(async () => {
	processor = await startTestProcessor('account');
	fake = processor.fake;
	await db()
		.insert(patients)
		.values([
			{
				id: PATIENT,
				slug: 'account-test',
				name: 'Caracola',
				species: 'green',
				lifeStage: 'juvenile',
				admittedOn: '2026-01-01',
				admissionReason: 'entanglement',
				status: 'in_rehabilitation'
			},
			{
				id: QUIET_PATIENT,
				slug: 'account-test-quiet',
				name: 'Bruma',
				species: 'loggerhead',
				lifeStage: 'subadult',
				admittedOn: '2026-03-01',
				admissionReason: 'cold_stunning',
				status: 'admitted'
			}
		]);
	await db()
		.insert(adoptionLevels)
		.values([
			{ id: RIPPLE, slug: 'ripple-t', name: 'Ripple', amountCents: 2500, interval: 'once' },
			{
				id: SWELL,
				slug: 'swell-t',
				name: 'Swell',
				amountCents: 1500,
				interval: 'month',
				goods: 'a keepsake kit',
				fairMarketValueCents: 1200
			},
			{ id: TIDE, slug: 'tide-t', name: 'Spring Tide', amountCents: 3000, interval: 'month' }
		]);
});

afterAll(() => processor?.stop());

describe('receipts and the thank-you e-mail', () => {
	it('issues one numbered receipt per paid gift, and one thank-you, however often events come', async () => {
		const { adoptionId, supporter } = await adopt(RIPPLE);
		const [receipt] = await receiptsOf(adoptionId);
		// Ripple buys nothing: the whole $25 is the contribution (IRS Publication 1771).
		expect(receipt).toMatchObject({
			status: 'issued',
			kind: 'original',
			amountCents: 2500,
			deductibleCents: 2500,
			fairMarketValueCents: 0
		});
		const mail = await mailTo(supporter.email);
		expect(mail).toHaveLength(1);
		expect(mail[0].category).toBe('transactional');
		expect(mail[0].subject).toContain(`receipt No. ${formatReceiptNumber(receipt.number)}`);
		expect(mail[0].text).toContain('No goods or services were provided');
		expect(mail[0].text).toContain('$25.00');

		// Every event of the fake delivered again: nothing new.
		for (const event of listEvents(100)) expect(redeliver(event.id).ok).toBe(true);
		await fake.flushWebhooks();
		expect(await receiptsOf(adoptionId)).toHaveLength(1);
		expect(await mailTo(supporter.email)).toHaveLength(1);
	});

	it('numbers receipts one after another', async () => {
		const first = await adopt(RIPPLE);
		const second = await adopt(RIPPLE);
		const [a] = await receiptsOf(first.adoptionId);
		const [b] = await receiptsOf(second.adoptionId);
		expect(b.number).toBe(a.number + 1);
	});

	it('counts the keepsake kit once: the first monthly gift deducts its value, renewals do not', async () => {
		const { adoptionId, supporter } = await adopt(SWELL);
		expect(advanceClock(31).ok).toBe(true);
		await fake.flushWebhooks();
		const rows = await receiptsOf(adoptionId);
		expect(rows).toHaveLength(2);
		// $15 paid, kit valued at $12 in good faith → $3 deductible (payment minus fair market value,
		// IRS Publication 1771); the renewal buys nothing → $15.
		expect(rows.map((r) => [r.amountCents, r.fairMarketValueCents, r.deductibleCents])).toEqual([
			[1500, 1200, 300],
			[1500, 0, 1500]
		]);
		const mail = await mailTo(supporter.email);
		expect(mail).toHaveLength(2);
		expect(mail[0].text).toContain('keepsake kit');
		expect(mail[0].text).toContain('$12.00');
	});

	it('voids the receipt on a refund and issues a corrected one for what is left', async () => {
		const { adoptionId } = await adopt(RIPPLE, { amountCents: 10000 });
		const [gift] = await giftRows(adoptionId);
		expect(refund(gift.chargeId!, 4000).ok).toBe(true);
		await fake.flushWebhooks();
		let rows = await receiptsOf(adoptionId);
		expect(rows.map((r) => [r.status, r.kind, r.amountCents])).toEqual([
			['void', 'original', 10000],
			['issued', 'corrected', 6000]
		]);
		expect(rows[1].replacesId).toBe(rows[0].id);
		expect(rows[1].number).toBeGreaterThan(rows[0].number);

		// The account downloads each as a PDF; anyone else gets the same answer as for no receipt.
		const payer = (await adoptionRow(adoptionId)).supporterId!;
		const [owner] = await db().select().from(users).where(eq(users.id, payer));
		const asOwner = { ...owner, roles: ['supporter'] } as SessionUser;
		for (const r of rows) {
			const response = await receiptDownload(asOwner, r.id);
			expect(response.status).toBe(200);
			expect(response.headers.get('content-disposition')).toContain(`receipt-${r.number}.pdf`);
			expect(
				Buffer.from(await response.arrayBuffer())
					.subarray(0, 5)
					.toString()
			).toBe('%PDF-');
		}
		const stranger = await person('Not The Payer');
		await expect(receiptDownload(stranger, rows[0].id)).rejects.toMatchObject({ status: 404 });

		// The rest refunded: the corrected receipt is void too, and nothing new is issued.
		expect(refund(gift.chargeId!).ok).toBe(true);
		await fake.flushWebhooks();
		rows = await receiptsOf(adoptionId);
		expect(rows.map((r) => r.status)).toEqual(['void', 'void']);
	});
});

describe('a monthly payment that fails', () => {
	it('records the failed gift and tells the supporter once how to update the card', async () => {
		// 4000 0000 0000 0341 in the fake: the first payment succeeds, renewals are declined.
		const { adoptionId, supporter } = await adopt(SWELL, { card: '4000000000000341' });
		expect(advanceClock(31).ok).toBe(true);
		await fake.flushWebhooks();
		const rows = await giftRows(adoptionId);
		expect(rows.map((g) => g.status)).toEqual(['paid', 'failed']);
		const mail = await mailTo(supporter.email);
		expect(mail.map((m) => m.subject)).toEqual([
			expect.stringContaining('Thank you'),
			expect.stringContaining('did not go through')
		]);
		expect(mail[1].text).toContain('/account');
		// No receipt for money that never came.
		expect(await receiptsOf(adoptionId)).toHaveLength(1);
	});
});

describe('gifts to someone else', () => {
	it('tells the recipient at once when no delivery date is set, and the link adds it to an account', async () => {
		const recipient = await person('Lucía Recipient');
		const { adoptionId } = await adopt(RIPPLE, {
			gift: { name: 'Lucía', email: recipient.email, message: 'Happy birthday!' }
		});
		const notices = await mailTo(recipient.email);
		expect(notices).toHaveLength(1);
		expect(notices[0].subject).toContain('adopted Caracola for you');
		expect(notices[0].text).toContain('Happy birthday!');
		const token = /\/gifts\/([a-z0-9]+)/.exec(notices[0].text)![1];

		expect((await giftForClaim(token))?.id).toBe(adoptionId);
		expect(await giftForClaim('not-a-token')).toBeNull();
		expect(await claimGift('not-a-token', recipient.id)).toBe('unknown');

		expect(await claimGift(token, recipient.id)).toBe('claimed');
		expect(await claimGift(token, recipient.id)).toBe('already-yours');
		const stranger = await person('Someone Else');
		expect(await claimGift(token, stranger.id)).toBe('taken');
		expect((await adoptionRow(adoptionId)).recipientId).toBe(recipient.id);

		const mine = await accountAdoptions(recipient.id);
		expect(mine.find((a) => a.id === adoptionId)).toMatchObject({ receivedAsGift: true });
	});

	it('waits for the delivery date, then sends the notice once', async () => {
		const email = `later-${crypto.randomUUID().slice(0, 8)}@example.test`;
		const { adoptionId } = await adopt(RIPPLE, {
			gift: { name: 'Tomasa', email, deliverOn: '2099-06-01' }
		});
		expect(await mailTo(email)).toHaveLength(0);
		expect(await deliverDueGiftNotices(new Date('2099-05-31T23:59:00Z'))).toBe(0);
		expect(await mailTo(email)).toHaveLength(0);

		expect(await deliverDueGiftNotices(new Date('2099-06-01T00:01:00Z'))).toBeGreaterThanOrEqual(1);
		expect(await mailTo(email)).toHaveLength(1);
		expect((await adoptionRow(adoptionId)).giftNotifiedAt).not.toBeNull();
		expect(await deliverDueGiftNotices(new Date('2099-06-02T00:00:00Z'))).toBe(0);
		expect(await mailTo(email)).toHaveLength(1);
	});
});

describe('changing a monthly adoption', () => {
	it('changes the level and amount at the processor; the next renewal charges the new amount', async () => {
		const { adoptionId, supporter } = await adopt(SWELL);
		const result = await accountActions.change(
			accountEvent(supporter, { adoptionId, levelId: TIDE, amount: '35' })
		);
		expect(isActionFailure(result), JSON.stringify(result)).toBe(false);
		await fake.flushWebhooks();
		const changed = await adoptionRow(adoptionId);
		expect(changed).toMatchObject({ levelId: TIDE, amountCents: 3500, fairMarketValueCents: 0 });
		const subscription = await stripe().subscriptions.retrieve(changed.subscriptionId!);
		expect(subscription.items.data[0].price.unit_amount).toBe(3500);

		expect(advanceClock(31).ok).toBe(true);
		await fake.flushWebhooks();
		expect((await giftRows(adoptionId)).map((g) => g.amountCents)).toEqual([1500, 3500]);
	});

	it('refuses a change it cannot make, with a message, and changes nothing', async () => {
		const { adoptionId, supporter } = await adopt(SWELL);
		const before = await adoptionRow(adoptionId);
		const cases: [Record<string, string>, SessionUser, string][] = [
			[{ adoptionId, levelId: TIDE, amount: '20' }, supporter, 'amount'], // below Spring Tide's $30
			[{ adoptionId, levelId: TIDE, amount: '20000' }, supporter, 'amount'], // above the maximum
			[{ adoptionId, levelId: TIDE, amount: 'lots' }, supporter, 'amount'],
			[{ adoptionId, levelId: RIPPLE, amount: '30' }, supporter, 'levelId'], // not monthly
			[{ adoptionId, levelId: 'no-such-level' }, supporter, 'levelId'],
			[{ adoptionId, levelId: SWELL, amount: '15' }, supporter, 'change'], // nothing to change
			[{ adoptionId, levelId: TIDE }, await person('Not The Payer'), 'change']
		];
		for (const [form, user, field] of cases) {
			const result = await accountActions.change(accountEvent(user, form));
			expect(isActionFailure(result), JSON.stringify(form)).toBe(true);
			const data = (result as { data: { errors: Record<string, string> } }).data;
			expect(Object.keys(data.errors), JSON.stringify(form)).toContain(field);
		}
		await fake.flushWebhooks();
		expect(await adoptionRow(adoptionId)).toEqual(before);
		await expect(
			changeMonthlyGift({ adoptionId, userId: supporter.id, levelId: TIDE, amountCents: 100 })
		).rejects.toBeInstanceOf(ChangeRefused);
	});

	it('shows the end date of a gift cancelled at the end of the paid month, then ends it', async () => {
		const { adoptionId } = await adopt(SWELL);
		const adoption = await adoptionRow(adoptionId);
		const portal = await stripe().billingPortal.sessions.create({
			customer: adoption.customerId!,
			return_url: `${processor.origin}/account`
		});
		expect(cancelSubscription(portal.id, adoption.subscriptionId!, 'period_end').ok).toBe(true);
		await fake.flushWebhooks();
		const cancelling = await adoptionRow(adoptionId);
		expect(cancelling.status).toBe('active');
		expect(cancelling.cancelAt).toBeInstanceOf(Date);
		expect(cancelling.cancelAt!.getTime()).toBeGreaterThan(cancelling.startedAt!.getTime());

		expect(advanceClock(31).ok).toBe(true);
		await fake.flushWebhooks();
		expect((await adoptionRow(adoptionId)).status).toBe('cancelled');
		expect(await giftRows(adoptionId)).toHaveLength(1);
	});

	it('never lets an older subscription event overwrite a newer one', async () => {
		const { adoptionId } = await adopt(SWELL);
		const adoption = await adoptionRow(adoptionId);
		const subscription = await stripe().subscriptions.retrieve(adoption.subscriptionId!);
		const newer = structuredClone(subscription);
		newer.items.data[0].price.unit_amount = 4000;
		const older = structuredClone(subscription);
		older.items.data[0].price.unit_amount = 2000;
		await db().transaction((tx) =>
			applySubscriptionState(tx, adoptionId, newer, new Date('2030-01-02T00:00:00Z'))
		);
		await db().transaction((tx) =>
			applySubscriptionState(tx, adoptionId, older, new Date('2030-01-01T00:00:00Z'))
		);
		expect((await adoptionRow(adoptionId)).amountCents).toBe(4000);
	});
});

describe('e-mail choices', () => {
	it('saves the choices of the signed-in address, and unchecked boxes turn updates off', async () => {
		const user = await person();
		expect(await getPreferences(db(), user.email)).toMatchObject({
			homecoming: true,
			waypoint: true,
			fieldNote: true,
			lastSignal: true,
			keepFollowing: false
		});
		const result = await accountActions.preferences(
			accountEvent(user, { homecoming: 'on', lastSignal: 'on', keepFollowing: 'on' })
		);
		expect(isActionFailure(result)).toBe(false);
		expect(await getPreferences(db(), user.email.toUpperCase())).toEqual({
			homecoming: true,
			waypoint: false,
			fieldNote: false,
			lastSignal: true,
			keepFollowing: true
		});
	});
});

describe('the patient who needs it most', () => {
	it('is the patient in care with the fewest active adoptions', async () => {
		// Caracola has many adoptions by now; Bruma has none.
		const [{ n }] = await db()
			.select({ n: count() })
			.from(adoptions)
			.where(and(eq(adoptions.patientId, PATIENT), eq(adoptions.status, 'active')));
		expect(n).toBeGreaterThan(0);
		expect((await patientMostInNeed())?.slug).toBe('account-test-quiet');
		await db().update(patients).set({ status: 'released' }).where(eq(patients.id, QUIET_PATIENT));
		expect((await patientMostInNeed())?.slug).toBe('account-test');
	});
});
