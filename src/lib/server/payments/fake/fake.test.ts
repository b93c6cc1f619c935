// The fake payment service driven through the official `stripe` SDK, as the app drives it, with
// webhook events received by a plain HTTP server on 127.0.0.1 and checked with the SDK's own
// signature verification (`stripe.webhooks.constructEvent`).
import { createHmac } from 'node:crypto';
import { mkdtempSync, rmSync } from 'node:fs';
import { createServer, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Stripe from 'stripe';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import {
	advanceClock,
	availableBalance,
	cancelSubscription,
	closeDispute,
	createPayout,
	FAKE_SECRET_KEY,
	listEvents,
	payCheckoutSession,
	refund,
	startFakeStripe,
	stopFakeStripe,
	updateCard,
	type FakeStripe
} from './index';

const ORIGIN = 'http://127.0.0.1:5173';
const stripe = new Stripe(FAKE_SECRET_KEY);

interface Received {
	event: Stripe.Event;
	header: string;
	body: string;
}

/** A webhook endpoint on 127.0.0.1 that verifies each delivery as the app's endpoint does. */
class Receiver {
	server: Server | null = null;
	port = 0;
	events: Received[] = [];
	rejected: string[] = [];
	requests = 0;
	/** Status to answer for the n-th request (1-based). */
	status: (n: number) => number = () => 200;
	secret = '';
	private waiters: (() => void)[] = [];

	get url() {
		return `http://127.0.0.1:${this.port}/api/webhooks/stripe`;
	}

	async start(port = 0): Promise<void> {
		this.server = createServer((req, res) => {
			const chunks: Buffer[] = [];
			req.on('data', (c: Buffer) => chunks.push(c));
			req.on('end', () => {
				this.requests += 1;
				const body = Buffer.concat(chunks).toString('utf8');
				const header = String(req.headers['stripe-signature'] ?? '');
				const status = this.status(this.requests);
				if (status >= 200 && status < 300) {
					try {
						const event = stripe.webhooks.constructEvent(body, header, this.secret);
						this.events.push({ event, header, body });
					} catch (error) {
						this.rejected.push((error as Error).message);
					}
				}
				res.writeHead(status, { 'content-type': 'application/json' }).end('{}');
				for (const wake of this.waiters.splice(0)) wake();
			});
		});
		await new Promise<void>((resolve) => this.server!.listen(port, '127.0.0.1', resolve));
		this.port = (this.server.address() as AddressInfo).port;
	}

	async close(): Promise<void> {
		const server = this.server;
		this.server = null;
		if (server) {
			server.closeAllConnections();
			await new Promise((resolve) => server.close(resolve));
		}
	}

	types(): string[] {
		return this.events.map((r) => r.event.type);
	}

	/** Waits (at most `ms`) until the condition holds after a request. */
	async until(condition: () => boolean, ms = 8000): Promise<void> {
		const deadline = Date.now() + ms;
		while (!condition()) {
			const left = deadline - Date.now();
			if (left <= 0) throw new Error('Timed out waiting for webhook deliveries.');
			await new Promise<void>((resolve) => {
				const timer = setTimeout(resolve, Math.min(left, 200));
				this.waiters.push(() => {
					clearTimeout(timer);
					resolve();
				});
			});
		}
	}
}

let dir: string;
let receiver: Receiver;
let fake: FakeStripe;

async function start(options: { deliver?: boolean; retryBaseMs?: number } = {}) {
	fake = await startFakeStripe({
		dataDir: dir,
		origin: ORIGIN,
		webhookUrl: receiver.url,
		deliver: options.deliver ?? false,
		retryBaseMs: options.retryBaseMs ?? 20
	});
	receiver.secret = fake.webhookSecret;
	return fake;
}

beforeEach(async () => {
	dir = mkdtempSync(join(tmpdir(), 'tideward-fake-stripe-'));
	receiver = new Receiver();
	await receiver.start();
	await start();
});

afterEach(async () => {
	await stopFakeStripe();
	await receiver.close();
	rmSync(dir, { recursive: true, force: true });
});

function onceParams(amount = 2500): Stripe.Checkout.SessionCreateParams {
	return {
		mode: 'payment',
		line_items: [
			{
				quantity: 1,
				price_data: {
					currency: 'usd',
					unit_amount: amount,
					product_data: { name: 'Adopt a patient', description: 'A symbolic adoption' }
				}
			}
		],
		metadata: { adoption_id: 'adoption-1' },
		payment_intent_data: { metadata: { adoption_id: 'adoption-1' } },
		customer_email: 'supporter@example.org',
		client_reference_id: 'adoption-1',
		success_url: `${ORIGIN}/adopt/thanks?session={CHECKOUT_SESSION_ID}`,
		cancel_url: `${ORIGIN}/adopt`
	};
}

function monthlyParams(amount = 1500): Stripe.Checkout.SessionCreateParams {
	return {
		mode: 'subscription',
		line_items: [
			{
				quantity: 1,
				price_data: {
					currency: 'usd',
					unit_amount: amount,
					recurring: { interval: 'month' },
					product_data: { name: 'Monthly adoption' }
				}
			}
		],
		metadata: { adoption_id: 'adoption-2' },
		subscription_data: { metadata: { adoption_id: 'adoption-2' } },
		customer_email: 'monthly@example.org',
		success_url: `${ORIGIN}/adopt/thanks?session={CHECKOUT_SESSION_ID}`,
		cancel_url: `${ORIGIN}/adopt`
	};
}

async function paidOnce(amount = 2500, card = '4242424242424242') {
	const session = await stripe.checkout.sessions.create(onceParams(amount));
	const paid = payCheckoutSession(session.id, { cardNumber: card });
	expect(paid).toEqual({ ok: true, redirectUrl: `${ORIGIN}/adopt/thanks?session=${session.id}` });
	const full = await stripe.checkout.sessions.retrieve(session.id, {
		expand: ['payment_intent.latest_charge']
	});
	const intent = full.payment_intent as Stripe.PaymentIntent;
	const charge = intent.latest_charge as Stripe.Charge;
	return { session: full, intent, charge };
}

/** `a` appears in `list` in this order (other items may come between). */
function inOrder(list: string[], a: string[]): boolean {
	let i = 0;
	for (const item of list) if (item === a[i]) i++;
	return i === a.length;
}

describe('one-time gift through checkout', () => {
	it('creates a session shaped like the real API and pays it with 4242', async () => {
		const session = await stripe.checkout.sessions.create(onceParams());
		expect(session.id).toMatch(/^cs_test_[A-Za-z0-9]{20,}$/);
		expect(session).toMatchObject({
			object: 'checkout.session',
			livemode: false,
			mode: 'payment',
			status: 'open',
			payment_status: 'unpaid',
			amount_total: 2500,
			currency: 'usd',
			customer_email: 'supporter@example.org',
			metadata: { adoption_id: 'adoption-1' },
			client_reference_id: 'adoption-1',
			url: `${ORIGIN}/fake-stripe/checkout/${session.id}`
		});
		expect(Number.isInteger(session.created)).toBe(true);
		expect(session.expires_at - session.created).toBe(24 * 3600);

		const { session: done, intent, charge } = await paidOnce();
		expect(done).toMatchObject({ status: 'complete', payment_status: 'paid', url: null });
		expect(done.customer_details?.email).toBe('supporter@example.org');
		// As the real API: a one-time payment makes a Customer only with customer_creation=always.
		expect(done.customer).toBeNull();
		const withCustomer = await stripe.checkout.sessions.create({
			...onceParams(),
			customer_creation: 'always'
		});
		payCheckoutSession(withCustomer.id, { cardNumber: '4242424242424242', name: 'Sam Example' });
		const customerId = (await stripe.checkout.sessions.retrieve(withCustomer.id))
			.customer as string;
		expect(customerId).toMatch(/^cus_/);
		expect(await stripe.customers.retrieve(customerId)).toMatchObject({
			object: 'customer',
			email: 'supporter@example.org',
			name: 'Sam Example'
		});
		expect(intent.id).toMatch(/^pi_/);
		expect(intent).toMatchObject({
			object: 'payment_intent',
			status: 'succeeded',
			amount: 2500,
			amount_received: 2500,
			metadata: { adoption_id: 'adoption-1' }
		});
		expect(charge.id).toMatch(/^ch_/);
		expect(charge).toMatchObject({
			paid: true,
			status: 'succeeded',
			amount: 2500,
			disputed: false
		});

		// Fee: 2.9 % + 30 ¢, the common US card rate (a rule of thumb, see objects.ts):
		// 2.9 % of 2500 = 72.5 → 73 (half up), + 30 = 103; net 2500 − 103 = 2397.
		const txn = await stripe.balanceTransactions.retrieve(charge.balance_transaction as string);
		expect(txn.id).toMatch(/^txn_/);
		expect(txn).toMatchObject({
			amount: 2500,
			fee: 103,
			net: 2397,
			type: 'charge',
			status: 'pending'
		});
		expect(txn.source).toBe(charge.id);
		expect(txn.available_on - txn.created).toBe(2 * 86400);
	});

	it('delivers the events in order, signed so that the SDK accepts them', async () => {
		const { session } = await paidOnce();
		await fake.flushWebhooks();
		expect(receiver.rejected).toEqual([]);
		expect(
			inOrder(receiver.types(), [
				'charge.succeeded',
				'payment_intent.succeeded',
				'checkout.session.completed'
			])
		).toBe(true);
		const completed = receiver.events.find((r) => r.event.type === 'checkout.session.completed')!;
		expect(completed.event.id).toMatch(/^evt_/);
		expect((completed.event.data.object as Stripe.Checkout.Session).id).toBe(session.id);
		expect(completed.event.livemode).toBe(false);
		expect(fake.pendingWebhooks()).toEqual([]);

		// The signature scheme by hand: t=<unix>,v1=<hex HMAC-SHA256 of "<t>.<body>">.
		const [, t, v1] = /^t=(\d+),v1=([0-9a-f]{64})$/.exec(completed.header)!;
		const expected = createHmac('sha256', fake.webhookSecret)
			.update(`${t}.${completed.body}`)
			.digest('hex');
		expect(v1).toBe(expected);
		expect(() =>
			stripe.webhooks.constructEvent(
				completed.body.replace('complete', 'open'),
				completed.header,
				fake.webhookSecret
			)
		).toThrow(/signature/i);
		// The event as the API returns it is the one delivered.
		const retrieved = await stripe.events.retrieve(completed.event.id);
		expect(retrieved.type).toBe('checkout.session.completed');
		expect(retrieved.pending_webhooks).toBe(0);
	});

	it('pays nothing with a declined card and says why', async () => {
		const session = await stripe.checkout.sessions.create(onceParams());
		const cases: [string, RegExp][] = [
			['4000000000000002', /^Your card was declined\.$/],
			['4000 0000 0000 9995', /^Your card has insufficient funds\.$/],
			['4000002500003155', /3-D Secure/],
			['4000000000000341', /^Your card was declined\.$/],
			['4111111111111112', /^Your card number is incorrect\.$/]
		];
		for (const [card, message] of cases) {
			const result = payCheckoutSession(session.id, { cardNumber: card });
			expect(result.ok).toBe(false);
			expect(result.ok ? '' : result.message).toMatch(message);
		}
		const after = await stripe.checkout.sessions.retrieve(session.id, {
			expand: ['payment_intent']
		});
		expect(after).toMatchObject({ status: 'open', payment_status: 'unpaid' });
		const intent = after.payment_intent as Stripe.PaymentIntent;
		expect(intent.status).toBe('requires_payment_method');
		expect(intent.amount_received).toBe(0);
		const balance = await stripe.balance.retrieve();
		expect(balance.available[0]).toMatchObject({ amount: 0, currency: 'usd' });
		expect(balance.pending[0]).toMatchObject({ amount: 0, currency: 'usd' });
		await fake.flushWebhooks();
		expect(receiver.types()).not.toContain('charge.succeeded');
		const failed = receiver.events.filter((r) => r.event.type === 'payment_intent.payment_failed');
		expect(
			failed.map(
				(r) => (r.event.data.object as Stripe.PaymentIntent).last_payment_error?.decline_code
			)
		).toEqual(['generic_decline', 'insufficient_funds', 'generic_decline']);

		// A good card afterwards pays, once.
		expect(payCheckoutSession(session.id, { cardNumber: '4242424242424242' }).ok).toBe(true);
		expect(payCheckoutSession(session.id, { cardNumber: '4242424242424242' })).toEqual({
			ok: false,
			message: 'This payment has already been made.'
		});
	});

	it('checks expiry and security code when the page sends them', async () => {
		const session = await stripe.checkout.sessions.create(onceParams());
		const base = { cardNumber: '4242424242424242', cvc: '123' };
		expect(payCheckoutSession(session.id, { ...base, expiry: '01/20' })).toMatchObject({
			ok: false
		});
		expect(payCheckoutSession(session.id, { ...base, expiry: '1' })).toMatchObject({ ok: false });
		expect(payCheckoutSession(session.id, { ...base, expiry: '12/40', cvc: '1' })).toMatchObject({
			ok: false,
			message: "Your card's security code is incomplete."
		});
		expect(payCheckoutSession(session.id, { ...base, expiry: '12 / 40' }).ok).toBe(true);
	});

	it('expires a session through the API and refuses to pay it afterwards', async () => {
		const session = await stripe.checkout.sessions.create(onceParams());
		const expired = await stripe.checkout.sessions.expire(session.id);
		expect(expired).toMatchObject({ status: 'expired', url: null });
		expect(payCheckoutSession(session.id, { cardNumber: '4242424242424242' }).ok).toBe(false);
		await fake.flushWebhooks();
		expect(receiver.types()).toEqual(['checkout.session.expired']);
	});
});

describe('monthly gift through checkout', () => {
	it('creates a subscription and a paid first invoice', async () => {
		const session = await stripe.checkout.sessions.create(monthlyParams());
		expect(payCheckoutSession(session.id, { cardNumber: '4242424242424242' }).ok).toBe(true);
		const done = await stripe.checkout.sessions.retrieve(session.id, { expand: ['subscription'] });
		const subscription = done.subscription as Stripe.Subscription;
		expect(subscription.id).toMatch(/^sub_/);
		expect(done.customer).toMatch(/^cus_/);
		expect(subscription).toMatchObject({
			status: 'active',
			metadata: { adoption_id: 'adoption-2' },
			customer: done.customer
		});
		const item = subscription.items.data[0];
		// One calendar month later (JavaScript's own UTC date arithmetic as the reference).
		const start = new Date(item.current_period_start * 1000);
		const monthLater = new Date(start);
		monthLater.setUTCMonth(start.getUTCMonth() + 1);
		if (monthLater.getUTCDate() === start.getUTCDate()) {
			expect(item.current_period_end * 1000).toBe(monthLater.getTime());
		}
		expect(item.price).toMatchObject({ unit_amount: 1500, recurring: { interval: 'month' } });

		const invoice = await stripe.invoices.retrieve(subscription.latest_invoice as string, {
			expand: ['payments.data.payment.payment_intent']
		});
		expect(invoice.id).toMatch(/^in_/);
		expect(invoice).toMatchObject({
			status: 'paid',
			billing_reason: 'subscription_create',
			amount_paid: 1500,
			parent: { subscription_details: { subscription: subscription.id } }
		});
		const intent = invoice.payments!.data[0].payment.payment_intent as Stripe.PaymentIntent;
		expect(intent).toMatchObject({ status: 'succeeded', amount: 1500 });
		expect(intent.latest_charge).toMatch(/^ch_/);
		const listed = await stripe.invoicePayments.list({ invoice: invoice.id });
		expect(listed.data.map((p) => p.payment.payment_intent)).toEqual([intent.id]);

		await fake.flushWebhooks();
		expect(receiver.rejected).toEqual([]);
		expect(
			inOrder(receiver.types(), [
				'customer.subscription.created',
				'invoice.paid',
				'checkout.session.completed'
			])
		).toBe(true);
	});

	it('renews when the clock passes the period end, and a 0341 card fails the renewal', async () => {
		const good = await stripe.checkout.sessions.create(monthlyParams(1500));
		const bad = await stripe.checkout.sessions.create({
			...monthlyParams(2000),
			customer_email: 'declines@example.org'
		});
		expect(payCheckoutSession(good.id, { cardNumber: '4242424242424242' }).ok).toBe(true);
		expect(payCheckoutSession(bad.id, { cardNumber: '4000000000000341' }).ok).toBe(true);
		await fake.flushWebhooks();
		receiver.events = [];

		expect(advanceClock(32).ok).toBe(true);
		await fake.flushWebhooks();
		const paid = receiver.events.filter((r) => r.event.type === 'invoice.paid');
		const failed = receiver.events.filter((r) => r.event.type === 'invoice.payment_failed');
		expect(paid).toHaveLength(1);
		expect(failed).toHaveLength(1);
		expect(paid[0].event.data.object).toMatchObject({
			billing_reason: 'subscription_cycle',
			amount_paid: 1500,
			status: 'paid'
		});
		expect(failed[0].event.data.object).toMatchObject({
			billing_reason: 'subscription_cycle',
			amount_paid: 0,
			amount_remaining: 2000,
			status: 'open'
		});

		const badSession = await stripe.checkout.sessions.retrieve(bad.id);
		const badSub = await stripe.subscriptions.retrieve(badSession.subscription as string);
		expect(badSub.status).toBe('past_due');
		const openInvoice = await stripe.invoices.retrieve(badSub.latest_invoice as string, {
			expand: ['payments.data.payment.payment_intent']
		});
		const intent = openInvoice.payments!.data[0].payment.payment_intent as Stripe.PaymentIntent;
		expect(intent.last_payment_error?.message).toBe('Your card was declined.');

		// The supporter puts in a working card on the billing page: the open renewal is collected.
		const portal = await stripe.billingPortal.sessions.create({
			customer: badSub.customer as string,
			return_url: `${ORIGIN}/account`
		});
		expect(portal.id).toMatch(/^bps_/);
		expect(portal.url).toBe(`${ORIGIN}/fake-stripe/billing/${portal.id}`);
		expect(updateCard(portal.id, '4000000000000002')).toMatchObject({ ok: false });
		expect(updateCard(portal.id, '4242424242424242')).toEqual({ ok: true });
		expect((await stripe.subscriptions.retrieve(badSub.id)).status).toBe('active');
		expect((await stripe.invoices.retrieve(openInvoice.id)).status).toBe('paid');

		// Cancelled from the billing page: it ends at the period end.
		expect(cancelSubscription(portal.id)).toEqual({ ok: true }); // their only monthly gift
		const ending = await stripe.subscriptions.retrieve(badSub.id);
		expect(ending).toMatchObject({ status: 'active', cancel_at_period_end: true });
		receiver.events = [];
		advanceClock(32);
		await fake.flushWebhooks();
		expect(receiver.types()).toContain('customer.subscription.deleted');
		expect((await stripe.subscriptions.retrieve(badSub.id)).status).toBe('canceled');
	});

	it('charges a changed amount from the next renewal, and cancels at once on DELETE', async () => {
		const session = await stripe.checkout.sessions.create(monthlyParams(1500));
		payCheckoutSession(session.id, { cardNumber: '4242424242424242' });
		const { subscription: subId } = await stripe.checkout.sessions.retrieve(session.id);
		const sub = await stripe.subscriptions.retrieve(subId as string);
		const item = sub.items.data[0];
		const updated = await stripe.subscriptions.update(sub.id, {
			items: [
				{
					id: item.id,
					price_data: {
						currency: 'usd',
						product: item.price.product as string,
						unit_amount: 2500,
						recurring: { interval: 'month' }
					}
				}
			],
			proration_behavior: 'none'
		});
		expect(updated.items.data[0].price.unit_amount).toBe(2500);
		advanceClock(32);
		const renewed = await stripe.subscriptions.retrieve(sub.id, { expand: ['latest_invoice'] });
		expect((renewed.latest_invoice as Stripe.Invoice).amount_paid).toBe(2500);

		const cancelled = await stripe.subscriptions.cancel(sub.id);
		expect(cancelled.status).toBe('canceled');
		await fake.flushWebhooks();
		expect(receiver.types()).toContain('customer.subscription.deleted');
		expect(receiver.types()).toContain('customer.subscription.updated');
	});
});

describe('refunds, disputes and payouts', () => {
	it('refunds with a negative balance transaction and charge.refunded', async () => {
		const { charge } = await paidOnce(2500);
		const partial = await stripe.refunds.create({ charge: charge.id, amount: 1000 });
		expect(partial.id).toMatch(/^re_/);
		expect(partial).toMatchObject({ object: 'refund', amount: 1000, status: 'succeeded' });
		const txn = await stripe.balanceTransactions.retrieve(partial.balance_transaction as string);
		expect(txn).toMatchObject({ amount: -1000, fee: 0, net: -1000, type: 'refund' });
		await expect(stripe.refunds.create({ charge: charge.id, amount: 2000 })).rejects.toMatchObject({
			type: 'StripeInvalidRequestError',
			code: 'amount_too_large',
			statusCode: 400
		});
		const rest = refund(charge.id);
		expect(rest).toMatchObject({ ok: true, refund: { amount: 1500 } });
		const after = await stripe.charges.retrieve(charge.id);
		expect(after).toMatchObject({ amount_refunded: 2500, refunded: true });
		await fake.flushWebhooks();
		const refunded = receiver.events.filter((r) => r.event.type === 'charge.refunded');
		expect(refunded.map((r) => (r.event.data.object as Stripe.Charge).amount_refunded)).toEqual([
			1000, 2500
		]);
	});

	it('opens a dispute on a 0259 payment; a lost dispute takes the amount and a $15 fee', async () => {
		const { charge } = await paidOnce(2500, '4000000000000259');
		await fake.flushWebhooks();
		const created = receiver.events.find((r) => r.event.type === 'charge.dispute.created');
		const dispute = created!.event.data.object as Stripe.Dispute;
		expect(dispute.id).toMatch(/^dp_/);
		expect(dispute).toMatchObject({ charge: charge.id, amount: 2500, status: 'needs_response' });
		expect((await stripe.charges.retrieve(charge.id)).disputed).toBe(true);
		await expect(stripe.refunds.create({ charge: charge.id })).rejects.toMatchObject({
			code: 'charge_disputed'
		});

		const closed = closeDispute(dispute.id, 'lost');
		expect(closed.ok).toBe(true);
		const lost = await stripe.disputes.retrieve(dispute.id);
		expect(lost.status).toBe('lost');
		// −2500 withdrawn, fee 1500, net −4000.
		expect(lost.balance_transactions[0]).toMatchObject({ amount: -2500, fee: 1500, net: -4000 });
		await fake.flushWebhooks();
		expect(receiver.types()).toContain('charge.dispute.closed');
	});

	it('pays out the available balance net of fees and lists what the payout contains', async () => {
		const a = await paidOnce(2500); // fee 73 + 30 = 103, net 2397
		const b = await paidOnce(1000); // 2.9 % of 1000 = 29, fee 59, net 941
		expect(createPayout()).toEqual({
			ok: false,
			message: 'There is no available balance to pay out.'
		});
		advanceClock(2);
		expect(availableBalance()).toBe(2397 + 941);
		await stripe.refunds.create({ charge: b.charge.id, amount: 500 });
		expect(availableBalance()).toBe(2397 + 941 - 500);
		await expect(stripe.payouts.create({ amount: 999_999, currency: 'usd' })).rejects.toMatchObject(
			{ code: 'balance_insufficient' }
		);

		const made = createPayout({ arrivalDays: 1 });
		expect(made.ok).toBe(true);
		const payout = made.ok ? made.payout : null;
		expect(payout!.id).toMatch(/^po_/);
		expect(payout).toMatchObject({ amount: 2838, status: 'pending', automatic: true });
		expect(availableBalance()).toBe(0);

		const contents: Stripe.BalanceTransaction[] = [];
		for await (const txn of stripe.balanceTransactions.list({ payout: payout!.id, limit: 2 })) {
			contents.push(txn);
		}
		const byType = (type: string) => contents.filter((t) => t.type === type);
		expect(
			byType('charge')
				.map((t) => t.source)
				.sort()
		).toEqual([a.charge.id, b.charge.id].sort());
		expect(byType('refund').map((t) => t.net)).toEqual([-500]);
		expect(byType('payout').map((t) => t.amount)).toEqual([-2838]);
		const paidIn = contents.filter((t) => t.type !== 'payout').reduce((s, t) => s + t.net, 0);
		expect(paidIn).toBe(payout!.amount);

		advanceClock(1);
		expect((await stripe.payouts.retrieve(payout!.id)).status).toBe('paid');
		await fake.flushWebhooks();
		expect(receiver.types()).toContain('payout.paid');
		expect(createPayout()).toMatchObject({ ok: false });
	});
});

describe('the API surface', () => {
	it('replays an idempotent request and refuses the same key with other parameters', async () => {
		const first = await stripe.checkout.sessions.create(onceParams(), {
			idempotencyKey: 'adopt-1'
		});
		const again = await stripe.checkout.sessions.create(onceParams(), {
			idempotencyKey: 'adopt-1'
		});
		expect(again.id).toBe(first.id);
		expect(again.lastResponse.headers['idempotent-replayed']).toBe('true');
		await expect(
			stripe.checkout.sessions.create(onceParams(3000), { idempotencyKey: 'adopt-1' })
		).rejects.toMatchObject({ type: 'StripeIdempotencyError', statusCode: 400 });
		const list = await stripe.checkout.sessions.list();
		expect(list.data.map((s) => s.id)).toEqual([first.id]);
	});

	it('answers 401 for a wrong key, 404 for unknown ids and 400 for unknown parameters', async () => {
		const wrong = new Stripe('sk_test_not_the_fake_key_1234', { maxNetworkRetries: 0 });
		await expect(wrong.checkout.sessions.retrieve('cs_test_x')).rejects.toMatchObject({
			type: 'StripeAuthenticationError',
			statusCode: 401,
			message: expect.stringMatching(/^Invalid API Key provided: sk_test_\*+1234$/)
		});
		await expect(stripe.charges.retrieve('ch_missing')).rejects.toMatchObject({
			type: 'StripeInvalidRequestError',
			statusCode: 404,
			code: 'resource_missing',
			message: "No such charge: 'ch_missing'"
		});
		await expect(
			stripe.checkout.sessions.create({ ...onceParams(), allow_promotion_codes: true })
		).rejects.toMatchObject({ statusCode: 400, param: 'allow_promotion_codes' });
		await expect(
			stripe.checkout.sessions.create({ ...onceParams(), mode: 'subscription' })
		).rejects.toMatchObject({ statusCode: 400 });
		await expect(stripe.coupons.list()).rejects.toMatchObject({ statusCode: 404 });
		expect(await stripe.checkout.sessions.list()).toMatchObject({ object: 'list', data: [] });
	});

	it('keeps its state across a restart', async () => {
		const secret = fake.webhookSecret;
		const session = await stripe.checkout.sessions.create(onceParams());
		payCheckoutSession(session.id, { cardNumber: '4242424242424242' });
		expect(fake.pendingWebhooks().length).toBeGreaterThan(0);
		await stopFakeStripe();

		await start({ deliver: true });
		expect(fake.webhookSecret).toBe(secret);
		const again = await stripe.checkout.sessions.retrieve(session.id);
		expect(again).toMatchObject({ id: session.id, status: 'complete' });
		// Events queued before the stop go out after the start.
		await receiver.until(() => receiver.types().includes('checkout.session.completed'));
		expect(receiver.rejected).toEqual([]);
	});
});

describe('webhook delivery', () => {
	it('retries after a 500 until the endpoint accepts', async () => {
		await stopFakeStripe();
		receiver.status = (n) => (n <= 2 ? 500 : 200);
		await start({ deliver: true, retryBaseMs: 20 });
		const session = await stripe.checkout.sessions.create(onceParams());
		await stripe.checkout.sessions.expire(session.id);
		await receiver.until(() => receiver.events.length === 1);
		await fake.flushWebhooks(); // the attempt in flight has recorded its answer
		expect(receiver.requests).toBe(3);
		const [view] = listEvents();
		expect(view).toMatchObject({
			type: 'checkout.session.expired',
			delivery: { status: 'delivered', attempts: 3, lastStatus: 200 }
		});
	});

	it('retries while the endpoint is down and delivers once it is back', async () => {
		const port = receiver.port;
		await stopFakeStripe();
		await receiver.close();
		await start({ deliver: true, retryBaseMs: 20 });
		const session = await stripe.checkout.sessions.create(onceParams());
		await stripe.checkout.sessions.expire(session.id);
		const deadline = Date.now() + 8000;
		while ((listEvents()[0].delivery?.attempts ?? 0) < 2) {
			if (Date.now() > deadline) throw new Error('No failed attempt seen.');
			await new Promise((r) => setTimeout(r, 20));
		}
		expect(listEvents()[0].delivery).toMatchObject({ status: 'pending' });
		expect(listEvents()[0].delivery?.lastError).toMatch(/fetch failed|ECONNREFUSED/);

		await receiver.start(port);
		await receiver.until(() => receiver.events.length === 1);
		await fake.flushWebhooks();
		expect(receiver.types()).toEqual(['checkout.session.expired']);
		expect(listEvents()[0].delivery?.status).toBe('delivered');
	});
});
