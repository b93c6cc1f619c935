// Payout reconciliation against the local fake processor: a payout of known balance transactions
// (charges with their fees, a partial refund, a lost dispute) adds up to the cent, and a charge
// with no gift, or a gift whose amount differs, is listed for a person to resolve.
import { eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startCheckout } from '$lib/server/adoptions/checkout';
import {
	adoptionLevels,
	gifts,
	patients,
	payoutLines,
	payouts,
	users
} from '$lib/server/db/schema';
import {
	markReconciled,
	noteIssue,
	payoutReconciliation,
	ReconcileRefused
} from '$lib/server/ledger/reconcile';
import { stripe } from '$lib/server/payments/client';
import {
	advanceClock,
	closeDispute,
	createPayout,
	openDispute,
	payCheckoutSession,
	refund,
	type FakeStripe
} from '$lib/server/payments/fake';
import { useTestDatabase } from '../setup/test-db';
import { startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
let processor: TestProcessor;
let fake: FakeStripe;
const PATIENT = crypto.randomUUID();
const LEVEL = crypto.randomUUID();
const STAFF = crypto.randomUUID();

async function adopt(amountCents: number) {
	const attemptId = crypto.randomUUID();
	const { url } = await startCheckout({
		attemptId,
		patientId: PATIENT,
		levelId: LEVEL,
		amountCents,
		kind: 'self',
		supporter: { id: null, email: `${attemptId.slice(0, 8)}@example.test`, name: 'A Giver' }
	});
	expect(payCheckoutSession(url.split('/').at(-1)!, { cardNumber: '4242424242424242' }).ok).toBe(
		true
	);
	await fake.flushWebhooks();
	const [gift] = await db().select().from(gifts).where(eq(gifts.adoptionId, attemptId));
	return gift;
}

/** Sweeps what is available into a payout that arrives at once; returns the app's payout row. */
async function payOut() {
	expect(advanceClock(3).ok).toBe(true); // card payments become available after two days
	const made = createPayout({ arrivalDays: 0 });
	expect(made.ok, JSON.stringify(made)).toBe(true);
	await fake.flushWebhooks();
	const id = (made as { payout: { id: string } }).payout.id;
	const [row] = await db().select().from(payouts).where(eq(payouts.id, id));
	return row;
}

beforeAll(async () => {
	processor = await startTestProcessor('reconcile');
	fake = processor.fake;
	await db().insert(users).values({ id: STAFF, email: 'dev@example.test', name: 'Dev Person' });
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'reconcile-test',
		name: 'Ola',
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'admitted'
	});
	await db()
		.insert(adoptionLevels)
		.values({ id: LEVEL, slug: 'ripple-r', name: 'Ripple', amountCents: 2500, interval: 'once' });
});
afterAll(() => processor?.stop());

describe('a payout of known balance transactions', () => {
	it('adds up to the payout to the cent, matched gift by gift, and is marked reconciled by a person', async () => {
		const a = await adopt(2500);
		const b = await adopt(5000);
		const c = await adopt(10000);
		expect(refund(b.chargeId!, 1000).ok).toBe(true);
		const dispute = openDispute(c.chargeId!);
		expect(dispute.ok).toBe(true);
		expect(closeDispute((dispute as { dispute: { id: string } }).dispute.id, 'lost').ok).toBe(true);
		await fake.flushWebhooks();
		const payout = await payOut();
		expect(payout.status).toBe('paid');

		// The processor's own numbers, read through the SDK: every transaction of the payout.
		const txns = [];
		for await (const t of stripe().balanceTransactions.list({ payout: payout.id, limit: 100 })) {
			if (t.type !== 'payout') txns.push(t);
		}
		const processorNet = txns.reduce((sum, t) => sum + t.net, 0);
		expect(processorNet).toBe(payout.amountCents);

		const state = (await payoutReconciliation(payout.id))!;
		expect(state.lines.filter((l) => l.type !== 'payout')).toHaveLength(txns.length);
		expect(state.summary).toMatchObject({
			grossCents: 2500 + 5000 + 10000,
			refundCents: -1000,
			netCents: payout.amountCents,
			payoutCents: payout.amountCents
		});
		expect(state.summary.disputeCents).toBeLessThan(0);
		expect(
			state.summary.grossCents +
				state.summary.refundCents +
				state.summary.disputeCents +
				state.summary.otherCents -
				state.summary.feeCents
		).toBe(payout.amountCents);
		expect(state.balanced).toBe(true);
		expect(state.issues).toEqual([]);
		// Each charge line found its gift; the refund and the dispute point at their charge's gift.
		const byCharge = new Map(state.lines.map((l) => [l.id, l]));
		for (const gift of [a, b, c]) {
			const lines = [...byCharge.values()].filter((l) => l.chargeId === gift.chargeId);
			expect(lines.length).toBeGreaterThan(0);
			expect(lines.every((l) => l.giftId === gift.id)).toBe(true);
		}

		await markReconciled(payout.id, STAFF, 'Matches the bank statement.');
		const [done] = await db().select().from(payouts).where(eq(payouts.id, payout.id));
		expect(done).toMatchObject({
			reconciledBy: STAFF,
			reconcileNote: 'Matches the bank statement.'
		});
		await expect(markReconciled(payout.id, STAFF)).rejects.toBeInstanceOf(ReconcileRefused);
	});

	it('flags a charge without a gift and an amount that differs until a person notes them', async () => {
		const kept = await adopt(2500);
		const lost = await adopt(4000);
		// As if the gift had never been recorded (its charge points elsewhere), and another gift's
		// amount had been mistyped.
		await db()
			.update(gifts)
			.set({ chargeId: 'ch_recorded_elsewhere' })
			.where(eq(gifts.id, lost.id));
		await db().update(gifts).set({ amountCents: 2400 }).where(eq(gifts.id, kept.id));
		const payout = await payOut();

		const state = (await payoutReconciliation(payout.id))!;
		expect(state.balanced).toBe(true); // the money adds up; the gifts do not
		expect(state.issues.map((i) => i.kind).sort()).toEqual([
			'amount-differs',
			'charge-without-gift'
		]);
		const missing = state.issues.find((i) => i.kind === 'charge-without-gift')!;
		expect(missing.description).toContain(lost.chargeId!);
		expect(missing.description).toContain('$40.00');

		await expect(markReconciled(payout.id, STAFF)).rejects.toThrow(/note on each difference/);
		await expect(noteIssue(payout.id, missing.key, '   ', STAFF)).rejects.toBeInstanceOf(
			ReconcileRefused
		);
		await expect(noteIssue(payout.id, 'charge:unknown', 'x', STAFF)).rejects.toBeInstanceOf(
			ReconcileRefused
		);
		for (const issue of state.issues) {
			await noteIssue(payout.id, issue.key, 'Checked with the processor dashboard.', STAFF);
		}
		await markReconciled(payout.id, STAFF);
		const [row] = await db().select().from(payouts).where(eq(payouts.id, payout.id));
		expect(row.reconciledAt).toBeInstanceOf(Date);
		const lines = await db().select().from(payoutLines).where(eq(payoutLines.payoutId, payout.id));
		expect(lines.find((l) => l.chargeId === lost.chargeId)?.giftId).toBeNull();
	});
});
