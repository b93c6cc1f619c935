// The admin's payment sandbox (/staff/sandbox) against the local fake processor, whose events go
// over loopback HTTP to the real webhook handler: who may use it, refusals that change nothing,
// and what each control does to the app's own tables once the events are applied.
import { isActionFailure, isHttpError } from '@sveltejs/kit';
import { count, eq, inArray } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { startCheckout } from '$lib/server/adoptions/checkout';
import {
	adoptionLevels,
	auditLog,
	gifts,
	patients,
	payouts,
	processorEvents,
	users
} from '$lib/server/db/schema';
import {
	availableBalance,
	fakeNow,
	listEvents,
	payCheckoutSession,
	type FakeStripe
} from '$lib/server/payments/fake';
import type { Role } from '$lib/roles';
import { actions, load } from '../../src/routes/staff/sandbox/+page.server';
import type { PageServerData } from '../../src/routes/staff/sandbox/$types';
import { load as staffLayout } from '../../src/routes/staff/+layout.server';
import { useTestDatabase } from '../setup/test-db';
import { startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
delete process.env.STRIPE_SECRET_KEY;
const db = useTestDatabase();

let fake: FakeStripe;
let processor: TestProcessor;
let admin: SessionUser;
const PATIENT = crypto.randomUUID();
const PATIENT_NAME = 'Sandbar';
const ONCE = crypto.randomUUID();
const MONTHLY = crypto.randomUUID();
const DAY = 86400;

function request(user: SessionUser | null, form?: Record<string, string>) {
	const url = new URL('http://localhost/staff/sandbox');
	let req: Request;
	if (form) {
		const body = new FormData();
		for (const [key, value] of Object.entries(form)) body.append(key, value);
		req = new Request(url, { method: 'POST', body });
	} else {
		req = new Request(url);
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

type ActionName = keyof typeof actions;

async function act(name: ActionName, form: Record<string, string> = {}, user = admin) {
	return actions[name](request(user, form));
}

/** A successful action's message. */
async function succeed(name: ActionName, form: Record<string, string> = {}): Promise<string> {
	const result = (await act(name, form)) as { action: string; done?: string };
	expect(isActionFailure(result), JSON.stringify(result)).toBe(false);
	expect(result.action).toBe(name);
	return result.done!;
}

/** A refused action's status and message. */
async function refuse(name: ActionName, form: Record<string, string> = {}) {
	const result = await act(name, form);
	expect(isActionFailure(result), JSON.stringify(result)).toBe(true);
	if (!isActionFailure(result)) throw new Error('unreachable');
	const data = result.data as unknown as {
		action: string;
		message: string;
		errors: Record<string, string>;
	};
	expect(data.action).toBe(name);
	return { status: result.status, ...data };
}

async function loadPage(user = admin) {
	return (await load(request(user))) as PageServerData;
}

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@example.test`;
	await db()
		.insert(users)
		.values({ id, email, name: `Person ${id.slice(0, 4)}` });
	return { id, email, name: `Person ${id.slice(0, 4)}`, roles };
}

/** An adoption paid on the fake checkout page with a test card, its events applied. */
async function adopt(levelId: string, amountCents: number, card = '4242424242424242') {
	const attemptId = crypto.randomUUID();
	const { url } = await startCheckout({
		attemptId,
		patientId: PATIENT,
		levelId,
		amountCents,
		kind: 'self',
		supporter: { id: null, email: `${attemptId.slice(0, 8)}@example.test`, name: 'A Reader' }
	});
	const paid = payCheckoutSession(url.split('/').at(-1)!, { cardNumber: card });
	expect(paid.ok).toBe(true);
	await fake.flushWebhooks();
	return attemptId;
}

async function giftsOf(adoptionId: string) {
	return db().select().from(gifts).where(eq(gifts.adoptionId, adoptionId)).orderBy(gifts.createdAt);
}

async function auditCount(): Promise<number> {
	const [{ n }] = await db().select({ n: count() }).from(auditLog);
	return n;
}

async function auditEntries(action: string) {
	return db().select().from(auditLog).where(eq(auditLog.action, action)).orderBy(auditLog.id);
}

beforeAll(async () => {
	processor = await startTestProcessor('sandbox');
	fake = processor.fake;
	admin = await person(['admin']);
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'sandbox-test',
		name: PATIENT_NAME,
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'in_rehabilitation'
	});
	await db()
		.insert(adoptionLevels)
		.values([
			{ id: ONCE, slug: 'sandbox-once', name: 'Driftwood', amountCents: 2500, interval: 'once' },
			{
				id: MONTHLY,
				slug: 'sandbox-monthly',
				name: 'Tidepool',
				amountCents: 1500,
				interval: 'month'
			}
		]);
});

afterAll(() => processor?.stop());

describe('who may use the sandbox', () => {
	it('refuses staff without the admin role with 403, and a visitor with 401, before acting', async () => {
		const clock = fakeNow();
		const events = listEvents(1000).length;
		const audits = await auditCount();
		for (const roles of [['educator'], ['development'], ['tracker'], ['supporter']] as Role[][]) {
			const user = await person(roles);
			await expect(load(request(user))).rejects.toSatisfy(
				(e) => isHttpError(e) && e.status === 403
			);
			for (const name of Object.keys(actions) as ActionName[]) {
				await expect(act(name, { days: '31' }, user), `${roles} ${name}`).rejects.toSatisfy(
					(e) => isHttpError(e) && e.status === 403
				);
			}
		}
		await expect(act('advance', { days: '31' }, null as never)).rejects.toSatisfy(
			(e) => isHttpError(e) && e.status === 401
		);
		expect(fakeNow() - clock).toBeLessThan(DAY);
		expect(listEvents(1000)).toHaveLength(events);
		expect(await auditCount()).toBe(audits);
	});

	it('is in the admin’s staff navigation in fake mode only, and is 404 with a real key', async () => {
		const labels = () =>
			(staffLayout(request(admin)) as { areas: { label: string }[] }).areas.map((a) => a.label);
		expect(labels()).toContain('Payment sandbox');
		const clock = fakeNow();
		process.env.STRIPE_SECRET_KEY = 'sk_test_not_used_here';
		try {
			expect(labels()).not.toContain('Payment sandbox');
			expect(labels()).toContain('Caught mail');
			await expect(load(request(admin))).rejects.toSatisfy(
				(e) => isHttpError(e) && e.status === 404
			);
			await expect(act('advance', { days: '31' })).rejects.toSatisfy(
				(e) => isHttpError(e) && e.status === 404
			);
		} finally {
			delete process.env.STRIPE_SECRET_KEY;
		}
		expect(fakeNow() - clock).toBeLessThan(DAY);
	});
});

describe('bad input gets a message and changes nothing', () => {
	it('refuses a clock move outside 1–366 whole days', async () => {
		const clock = fakeNow();
		const audits = await auditCount();
		for (const days of ['0', '367', '-3', '1.5', 'a month']) {
			const refused = await refuse('advance', { days });
			expect(refused.status, days).toBe(400);
			expect(refused.message).toBe('Enter a whole number of days from 1 to 366.');
			expect(refused.errors.days).toBe('Enter a whole number of days from 1 to 366.');
		}
		expect(fakeNow() - clock).toBeLessThan(DAY);
		expect(await auditCount()).toBe(audits);
	});

	it('refuses unknown charges, disputes and events, and a payout of nothing', async () => {
		const events = listEvents(1000).length;
		const audits = await auditCount();
		const unknownCharge = await refuse('refund', { chargeId: 'ch_NoSuchCharge0001' });
		expect(unknownCharge).toMatchObject({
			status: 400,
			message: 'There is no gift with that charge here; choose a payment from the list.'
		});
		expect((await refuse('refund', { chargeId: 'drop table' })).message).toBe(
			'Choose a payment from the list.'
		);
		expect((await refuse('dispute', { chargeId: 'ch_NoSuchCharge0001' })).status).toBe(400);
		expect(
			(await refuse('closeDispute', { disputeId: 'dp_NoSuchDispute01', outcome: 'won' })).message
		).toBe('There is no gift with that dispute here; choose a dispute from the list.');
		expect(
			(await refuse('closeDispute', { disputeId: 'dp_NoSuchDispute01', outcome: 'draw' })).errors
				.outcome
		).toBe('Choose whether the dispute was won or lost.');
		expect((await refuse('redeliver', { eventId: 'evt_NoSuchEvent0001' })).message).toBe(
			"No such event: 'evt_NoSuchEvent0001'"
		);
		expect(await refuse('payout')).toMatchObject({
			status: 400,
			message: 'There is no available balance to pay out.'
		});
		expect(listEvents(1000)).toHaveLength(events);
		expect(await auditCount()).toBe(audits);
		expect(await db().select().from(payouts)).toEqual([]);
	});
});

describe('a payout', () => {
	it('sweeps the available balance, and the app marks the swept gifts with the payout', async () => {
		const first = await adopt(ONCE, 2500);
		const second = await adopt(ONCE, 4000);
		expect(availableBalance()).toBe(0); // card payments become available two days later
		await succeed('advance', { days: '3' });

		// The fake charges the common US card rate, 2.9 % + 30¢ per payment (a published rule of
		// thumb, not ours). $25.00: 2.9 % is 72.5¢, rounded to 73¢, + 30¢ = $1.03 → net $23.97.
		// $40.00: 2.9 % is $1.16, + 30¢ = $1.46 → net $38.54. Together $62.51.
		const [a] = await giftsOf(first);
		const [b] = await giftsOf(second);
		expect([a.feeCents, a.netCents, b.feeCents, b.netCents]).toEqual([103, 2397, 146, 3854]);
		expect(availableBalance()).toBe(6251);

		const done = await succeed('payout');
		const [row] = await db().select().from(payouts);
		expect(row).toMatchObject({ status: 'paid', amountCents: 6251, currency: 'usd' });
		expect(done).toBe(
			`Paid out $62.51 in payout ${row.id}; it arrived at once and covers 2 gifts.`
		);
		const swept = await db().select().from(gifts).where(eq(gifts.payoutId, row.id));
		expect(swept.map((g) => g.adoptionId).sort()).toEqual([first, second].sort());
		expect(swept.reduce((sum, g) => sum + g.netCents!, 0)).toBe(row.amountCents);
		expect(availableBalance()).toBe(0);

		const [entry] = await auditEntries('sandbox.payout');
		expect(entry).toMatchObject({ actorId: admin.id, subject: row.id });
		expect(entry.details).toMatchObject({ amountCents: 6251 });
	});
});

describe('the page', () => {
	it('shows the fake clock, the balance, the gifts with their patient and the events', async () => {
		const data = await loadPage();
		expect(data.clock.iso).toBe(new Date(fakeNow() * 1000).toISOString());
		expect(data.clock.label).toMatch(/^\d{4}-\d\d-\d\d \d\d:\d\d UTC$/);
		expect(data.availableCents).toBe(0);
		expect(data.gifts).toHaveLength(2);
		expect(data.gifts.every((g) => g.patientName === PATIENT_NAME)).toBe(true);
		expect(data.gifts.map((g) => g.amountCents).sort()).toEqual([2500, 4000]);
		expect(data.refundable.map((o) => o.chargeId).sort()).toEqual(
			data.gifts.map((g) => g.chargeId).sort()
		);
		expect(data.events.length).toBeGreaterThan(0);
		expect(data.events.length).toBeLessThanOrEqual(50);
		expect(data.events[0].type).toBe('payout.paid');
		expect(data.events.every((e) => e.delivery?.status === 'delivered')).toBe(true);
	});
});

describe('moving the clock a month', () => {
	it('renews monthly gifts: paid with a good card, failed with a card that fails renewals', async () => {
		const good = await adopt(MONTHLY, 1500);
		const failing = await adopt(MONTHLY, 1500, '4000000000000341');
		expect(await giftsOf(good)).toHaveLength(1);
		expect(await giftsOf(failing)).toHaveLength(1);

		const done = await succeed('advance'); // no days given: a month (31 days)
		expect(done).toMatch(
			/^Moved the clock 31 days, to \d{4}-\d\d-\d\d \d\d:\d\d UTC: renewals: 1 paid, 1 failed\.$/
		);
		const renewed = await giftsOf(good);
		expect(renewed).toHaveLength(2);
		expect(renewed.map((g) => g.status)).toEqual(['paid', 'paid']);
		expect(renewed[1].invoiceId).not.toBe(renewed[0].invoiceId);
		expect((await giftsOf(failing)).map((g) => g.status)).toEqual(['paid', 'failed']);

		const entries = await auditEntries('sandbox.advance');
		expect(entries.at(-1)?.details).toMatchObject({ days: 31 });
	});
});

describe('refunds', () => {
	it('refuses more than is left, then refunds part and the rest', async () => {
		const adoptionId = await adopt(ONCE, 2500);
		const [gift] = await giftsOf(adoptionId);
		const chargeId = gift.chargeId!;
		const events = listEvents(1000).length;

		const tooMuch = await refuse('refund', { chargeId, amount: '25.01' });
		expect(tooMuch.message).toBe('The refund can be at most $25.00, what is left of this payment.');
		expect(tooMuch.errors.amount).toBe(tooMuch.message);
		expect((await refuse('refund', { chargeId, amount: 'ten' })).errors.amount).toBe(
			'Enter an amount in dollars, like 25 or 25.50.'
		);
		expect((await refuse('refund', { chargeId, amount: '0' })).status).toBe(400);
		expect(listEvents(1000)).toHaveLength(events);
		expect((await giftsOf(adoptionId))[0]).toMatchObject({ status: 'paid', refundedCents: 0 });

		expect(await succeed('refund', { chargeId, amount: '10' })).toBe(
			`Refunded $10.00 of the $25.00 gift for ${PATIENT_NAME} (${chargeId}).`
		);
		expect((await giftsOf(adoptionId))[0]).toMatchObject({
			status: 'partially_refunded',
			refundedCents: 1000
		});

		expect(await succeed('refund', { chargeId, amount: '' })).toBe(
			`Refunded $15.00 of the $25.00 gift for ${PATIENT_NAME} (${chargeId}).`
		);
		expect((await giftsOf(adoptionId))[0]).toMatchObject({
			status: 'refunded',
			refundedCents: 2500
		});
		expect((await refuse('refund', { chargeId })).message).toBe(
			'This payment has been refunded in full already.'
		);
		const entries = await auditEntries('sandbox.refund');
		expect(entries.map((e) => (e.details as { amountCents: number }).amountCents)).toEqual([
			1000, 1500
		]);
		expect(entries.every((e) => e.subject === chargeId && e.actorId === admin.id)).toBe(true);
	});
});

describe('disputes', () => {
	it('marks the gift disputed, and a win makes it paid again', async () => {
		const adoptionId = await adopt(ONCE, 2500);
		const [gift] = await giftsOf(adoptionId);
		const chargeId = gift.chargeId!;

		await succeed('dispute', { chargeId });
		const [disputed] = await giftsOf(adoptionId);
		expect(disputed.status).toBe('disputed');
		expect(disputed.disputeId).toMatch(/^dp_/);
		expect(disputed.disputeStatus).toBe('needs_response');

		const page = await loadPage();
		expect(page.openDisputes.map((d) => d.disputeId)).toContain(disputed.disputeId);
		expect(page.refundable.map((o) => o.chargeId)).not.toContain(chargeId);
		// The processor refuses to refund a disputed charge; the message says so.
		expect((await refuse('refund', { chargeId })).message).toBe(
			`Charge ${chargeId} has been charged back; cannot issue a refund.`
		);
		expect((await refuse('dispute', { chargeId })).message).toBe(
			'This charge is already disputed.'
		);

		await succeed('closeDispute', { disputeId: disputed.disputeId!, outcome: 'won' });
		expect((await giftsOf(adoptionId))[0]).toMatchObject({
			status: 'paid',
			disputeStatus: 'won'
		});
		expect(
			(await refuse('closeDispute', { disputeId: disputed.disputeId!, outcome: 'lost' })).message
		).toBe('This dispute is already closed (won).');
	});

	it('a lost dispute leaves the gift disputed', async () => {
		const adoptionId = await adopt(ONCE, 2500);
		const [gift] = await giftsOf(adoptionId);
		await succeed('dispute', { chargeId: gift.chargeId! });
		const [disputed] = await giftsOf(adoptionId);
		await succeed('closeDispute', { disputeId: disputed.disputeId!, outcome: 'lost' });
		expect((await giftsOf(adoptionId))[0]).toMatchObject({
			status: 'disputed',
			disputeStatus: 'lost'
		});
	});
});

describe('sending an event again', () => {
	it('delivers it once more and the app, having applied it already, changes nothing', async () => {
		const refunded = listEvents(1000).find((e) => e.type === 'charge.refunded')!;
		const paid = listEvents(1000).find((e) => e.type === 'invoice.paid')!;
		const before = {
			gifts: await db().select().from(gifts).orderBy(gifts.id),
			payouts: await db().select().from(payouts),
			events: await db().select({ n: count() }).from(processorEvents)
		};
		const [applied] = await db()
			.select({ n: count() })
			.from(processorEvents)
			.where(inArray(processorEvents.id, [refunded.id, paid.id]));
		expect(applied.n).toBe(2);

		for (const e of [refunded, paid]) {
			expect(await succeed('redeliver', { eventId: e.id })).toBe(
				`Sent event ${e.id} (${e.type}) again; the app answered HTTP 200.`
			);
			const after = listEvents(1000).find((x) => x.id === e.id)!;
			expect(after.delivery).toMatchObject({
				status: 'delivered',
				attempts: e.delivery!.attempts + 1,
				lastStatus: 200
			});
		}
		expect({
			gifts: await db().select().from(gifts).orderBy(gifts.id),
			payouts: await db().select().from(payouts),
			events: await db().select({ n: count() }).from(processorEvents)
		}).toEqual(before);
		expect((await auditEntries('sandbox.redeliver')).map((e) => e.subject)).toEqual([
			refunded.id,
			paid.id
		]);
	});
});
