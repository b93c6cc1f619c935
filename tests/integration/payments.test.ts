// Adoptions paid through the official SDK against the local fake processor, with events delivered
// over HTTP (loopback) to the real webhook endpoint: signatures, once-only application,
// out-of-order events, a failure before commit, and the adoption form's refusals.
import { isActionFailure } from '@sveltejs/kit';
import { count, eq } from 'drizzle-orm';
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { startCheckout } from '$lib/server/adoptions/checkout';
import { adoptionLevels, adoptions, gifts, patients, processorEvents } from '$lib/server/db/schema';
import { stripe } from '$lib/server/payments/client';
import { advanceClock, payCheckoutSession, type FakeStripe } from '$lib/server/payments/fake';
import { actions as adoptActions } from '../../src/routes/patients/[slug]/adopt/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { postWebhook, startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

let fake: FakeStripe;
let origin: string;
let processor: TestProcessor;
const PATIENT = crypto.randomUUID();
const ONCE = crypto.randomUUID();
const MONTHLY = crypto.randomUUID();

const post = postWebhook;

beforeAll(async () => {
	processor = await startTestProcessor('pay');
	({ fake, origin } = processor);
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'pay-test',
		name: 'Marea',
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'in_rehabilitation'
	});
	await db()
		.insert(adoptionLevels)
		.values([
			{ id: ONCE, slug: 'once', name: 'Ripple', amountCents: 2500, interval: 'once' },
			{
				id: MONTHLY,
				slug: 'monthly',
				name: 'Swell',
				amountCents: 1500,
				interval: 'month',
				goods: 'a keepsake kit',
				fairMarketValueCents: 1200
			}
		]);
});

afterAll(() => processor?.stop());

async function adopt(levelId: string, email = 'reader@example.test') {
	const attemptId = crypto.randomUUID();
	const { url } = await startCheckout({
		attemptId,
		patientId: PATIENT,
		levelId,
		amountCents: levelId === ONCE ? 2500 : 1500,
		kind: 'self',
		supporter: { id: null, email, name: 'A Reader' }
	});
	const sessionId = url.split('/').at(-1)!;
	return { attemptId, sessionId };
}

async function giftsOf(adoptionId: string) {
	return db().select().from(gifts).where(eq(gifts.adoptionId, adoptionId));
}

describe('a one-time adoption', () => {
	it('is paid on the fake checkout page, and the signed events make it active with one gift', async () => {
		const { attemptId, sessionId } = await adopt(ONCE);
		const [pending] = await db().select().from(adoptions).where(eq(adoptions.id, attemptId));
		expect(pending).toMatchObject({ status: 'pending', checkoutSessionId: sessionId });

		const paid = payCheckoutSession(sessionId, { cardNumber: '4242 4242 4242 4242' });
		expect(paid).toEqual({
			ok: true,
			redirectUrl: `${origin}/adopt/thanks?session_id=${sessionId}`
		});
		await fake.flushWebhooks();

		const [active] = await db().select().from(adoptions).where(eq(adoptions.id, attemptId));
		expect(active.status).toBe('active');
		const [gift] = await giftsOf(attemptId);
		// A common US card rate, 2.9 % + 30¢ (a rule of thumb the fake uses): 2.9 % of $25.00 is
		// 72.5¢, rounded to 73¢, plus 30¢ = $1.03; net $23.97.
		expect(gift).toMatchObject({
			status: 'paid',
			amountCents: 2500,
			feeCents: 103,
			netCents: 2397,
			checkoutSessionId: sessionId
		});
		expect(gift.paymentIntentId).toMatch(/^pi_/);
		expect(gift.chargeId).toMatch(/^ch_/);
		expect(gift.balanceTransactionId).toMatch(/^txn_/);
	});

	it('a declined card pays nothing, says why, and leaves no gift', async () => {
		const { attemptId, sessionId } = await adopt(ONCE);
		const declined = payCheckoutSession(sessionId, { cardNumber: '4000000000000002' });
		expect(declined).toEqual({ ok: false, message: 'Your card was declined.' });
		await fake.flushWebhooks();
		const [row] = await db().select().from(adoptions).where(eq(adoptions.id, attemptId));
		expect(row.status).toBe('pending');
		expect(await giftsOf(attemptId)).toEqual([]);
	});

	it('the same attempt submitted twice makes one adoption and one checkout session', async () => {
		const attemptId = crypto.randomUUID();
		const request = {
			attemptId,
			patientId: PATIENT,
			levelId: ONCE,
			amountCents: 2500,
			kind: 'self' as const,
			supporter: { id: null, email: 'twice@example.test', name: 'Twice' }
		};
		const first = await startCheckout(request);
		const second = await startCheckout(request);
		expect(second.url).toBe(first.url);
		const [n] = await db()
			.select({ n: count() })
			.from(adoptions)
			.where(eq(adoptions.supporterEmail, 'twice@example.test'));
		expect(n.n).toBe(1);
	});
});

describe('the webhook endpoint', () => {
	async function signedCheckoutEvent() {
		const { attemptId, sessionId } = await adopt(ONCE, 'again@example.test');
		fake.setAutoDelivery(false);
		payCheckoutSession(sessionId, { cardNumber: '4242424242424242' });
		const events = await stripe().events.list({ type: 'checkout.session.completed', limit: 5 });
		const event = events.data.find((e) => (e.data.object as { id: string }).id === sessionId)!;
		return { attemptId, payload: JSON.stringify(event) };
	}

	it('refuses a tampered or stale signature with 400 and writes nothing', async () => {
		const { attemptId, payload } = await signedCheckoutEvent();
		const before = await db().select({ n: count() }).from(processorEvents);
		const secret = fake.webhookSecret;
		// The reference signer from the official SDK.
		const good = Stripe.webhooks.generateTestHeaderString({ payload, secret });
		const tampered = payload.replace('"amount_total":2500', '"amount_total":1');
		expect(tampered).not.toBe(payload);
		expect((await post(tampered, good)).status).toBe(400);
		const stale = Stripe.webhooks.generateTestHeaderString({
			payload,
			secret,
			timestamp: Math.floor(Date.now() / 1000) - 600
		});
		expect((await post(payload, stale)).status).toBe(400);
		expect((await post(payload, null)).status).toBe(400);
		const wrongSecret = Stripe.webhooks.generateTestHeaderString({
			payload,
			secret: 'whsec_not_ours'
		});
		expect((await post(payload, wrongSecret)).status).toBe(400);
		expect(await db().select({ n: count() }).from(processorEvents)).toEqual(before);
		expect(await giftsOf(attemptId)).toEqual([]);
	});

	it('applies the same event delivered 10 times once', async () => {
		const { attemptId, payload } = await signedCheckoutEvent();
		const secret = fake.webhookSecret;
		const outcomes = [];
		for (let i = 0; i < 10; i++) {
			const response = await post(
				payload,
				Stripe.webhooks.generateTestHeaderString({ payload, secret })
			);
			expect(response.status).toBe(200);
			outcomes.push((await response.json()).outcome);
		}
		expect(outcomes[0]).toBe('applied');
		expect(outcomes.slice(1).every((o) => o === 'duplicate')).toBe(true);
		expect(await giftsOf(attemptId)).toHaveLength(1);
	});

	it('answers 5xx when the effects cannot be applied, and the redelivery completes them', async () => {
		const { attemptId, payload } = await signedCheckoutEvent();
		const secret = fake.webhookSecret;
		// The processor's API is unreachable while the event is handled: nothing may be recorded.
		const offline = new Stripe('sk_test_unreachable', {
			host: '127.0.0.1',
			port: 9,
			protocol: 'http',
			maxNetworkRetries: 0
		});
		const globalStripe = globalThis as { __tidewardStripe?: Stripe };
		const saved = globalStripe.__tidewardStripe;
		globalStripe.__tidewardStripe = offline;
		try {
			const failed = await post(
				payload,
				Stripe.webhooks.generateTestHeaderString({ payload, secret })
			);
			expect(failed.status).toBe(500);
		} finally {
			globalStripe.__tidewardStripe = saved;
		}
		const [recorded] = await db()
			.select({ n: count() })
			.from(processorEvents)
			.where(eq(processorEvents.id, JSON.parse(payload).id));
		expect(recorded.n).toBe(0);
		expect(await giftsOf(attemptId)).toEqual([]);

		const again = await post(
			payload,
			Stripe.webhooks.generateTestHeaderString({ payload, secret })
		);
		expect(again.status).toBe(200);
		expect(await giftsOf(attemptId)).toHaveLength(1);
	});
});

describe('a monthly adoption', () => {
	it('reaches the same state when its events arrive in reverse order, and renews when the clock moves', async () => {
		const { attemptId, sessionId } = await adopt(MONTHLY, 'monthly@example.test');
		fake.setAutoDelivery(false);
		const paid = payCheckoutSession(sessionId, { cardNumber: '4242424242424242' });
		expect(paid.ok).toBe(true);
		const all = await stripe().events.list({ limit: 20 });
		const ours = all.data
			.filter((e) => JSON.stringify(e.data.object).includes(sessionId) || e.type === 'invoice.paid')
			.slice(0, 6);
		const secret = fake.webhookSecret;
		// Newest first, as events.list gives them: the invoice before the checkout completion.
		for (const event of ours) {
			const payload = JSON.stringify(event);
			const response = await post(
				payload,
				Stripe.webhooks.generateTestHeaderString({ payload, secret })
			);
			expect(response.status).toBe(200);
		}
		const [adoption] = await db().select().from(adoptions).where(eq(adoptions.id, attemptId));
		expect(adoption.status).toBe('active');
		expect(adoption.subscriptionId).toMatch(/^sub_/);
		expect(adoption.customerId).toMatch(/^cus_/);
		const first = await giftsOf(attemptId);
		expect(first).toHaveLength(1);
		expect(first[0]).toMatchObject({ amountCents: 1500, fairMarketValueCents: 1200 });
		expect(first[0].invoiceId).toMatch(/^in_/);

		await fake.flushWebhooks(); // the same events again, in order: nothing changes
		expect(await giftsOf(attemptId)).toHaveLength(1);

		fake.setAutoDelivery(false);
		expect(advanceClock(31).ok).toBe(true);
		await fake.flushWebhooks();
		const renewed = await giftsOf(attemptId);
		expect(renewed).toHaveLength(2);
		expect(renewed.every((g) => g.status === 'paid')).toBe(true);
	});
});

describe('under load', () => {
	// 50 in the everyday run; `LOAD_ADOPTIONS=200 npx vitest run tests/integration/payments.test.ts
	// -t concurrent` runs the issue's 200 (about two minutes here: events are delivered one by one).
	const LOAD = Number(process.env.LOAD_ADOPTIONS ?? 50);
	it(`${LOAD} concurrent adoptions through the fake make exactly ${LOAD} gifts`, async () => {
		fake.setAutoDelivery(true);
		const attempts = Array.from({ length: LOAD }, (_, i) => i);
		const ids = await Promise.all(
			attempts.map(async (i) => {
				const { attemptId, sessionId } = await adopt(ONCE, `load-${i}@example.test`);
				const paid = payCheckoutSession(sessionId, { cardNumber: '4242424242424242' });
				expect(paid.ok).toBe(true);
				return attemptId;
			})
		);
		// Delivery retries with backoff after a transient failure (a reset keep-alive socket, say):
		// keep flushing until the queue is empty, for at most a minute.
		const deadline = Date.now() + 60_000;
		do await fake.flushWebhooks();
		while (fake.pendingWebhooks().length && Date.now() < deadline);
		expect(fake.pendingWebhooks()).toEqual([]);
		const rows = await db().select({ adoptionId: gifts.adoptionId }).from(gifts);
		const wanted = new Set<string>(ids);
		const ours = rows.filter((r) => r.adoptionId !== null && wanted.has(r.adoptionId));
		expect(ours).toHaveLength(LOAD);
		expect(new Set(ours.map((r) => r.adoptionId)).size).toBe(LOAD);
		const active = await db()
			.select({ id: adoptions.id, status: adoptions.status })
			.from(adoptions);
		expect(active.filter((a) => wanted.has(a.id) && a.status === 'active')).toHaveLength(LOAD);
	}, 300_000);
});

describe('the adoption form', () => {
	function formEvent(form: Record<string, string>) {
		const body = new FormData();
		for (const [k, v] of Object.entries(form)) body.append(k, v);
		const url = new URL('http://localhost/patients/pay-test/adopt');
		return {
			request: new Request(url, { method: 'POST', body }),
			url,
			params: { slug: 'pay-test' },
			locals: { user: null, session: null, requestId: 'test' },
			cookies: { get: () => undefined, set: () => {}, delete: () => {} },
			getClientAddress: () => '127.0.0.1'
		} as never;
	}
	const base = {
		levelId: ONCE,
		kind: 'self',
		supporterName: 'Form Person',
		supporterEmail: 'form@example.test'
	};

	it('refuses bad input with a message per field and stores nothing', async () => {
		const cases: Array<[Record<string, string>, string, RegExp]> = [
			[{ amount: '5' }, 'amount', /at least \$25\.00/],
			[{ amount: '20000' }, 'amount', /at most \$10000\.00/],
			[{ amount: 'twenty' }, 'amount', /Enter an amount in dollars/],
			[{ levelId: 'no-such-level' }, 'levelId', /not offered/],
			[{ kind: 'gift', recipientName: 'Friend' }, 'recipientEmail', /recipient’s e-mail/],
			[{ supporterEmail: 'not-an-address' }, 'supporterEmail', /e-mail address like/]
		];
		for (const [change, field, message] of cases) {
			const result = await adoptActions.default(
				formEvent({ ...base, attemptId: crypto.randomUUID(), ...change })
			);
			expect(isActionFailure(result), field).toBe(true);
			const errors = (result as { data: { errors: Record<string, string> } }).data.errors;
			expect(errors[field], JSON.stringify(errors)).toMatch(message);
		}
		const [n] = await db()
			.select({ n: count() })
			.from(adoptions)
			.where(eq(adoptions.supporterEmail, 'form@example.test'));
		expect(n.n).toBe(0);
	});
});
