// The fake checkout and billing pages: their loads and actions against a running fake, and the
// pages rendered on the server with what those return.
import { isActionFailure, isHttpError, isRedirect } from '@sveltejs/kit';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import Stripe from 'stripe';
import { render } from 'svelte/server';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { FAKE_SECRET_KEY, startFakeStripe, stopFakeStripe } from '$lib/server/payments/fake';
import BillingPage from './billing/[id]/+page.svelte';
import * as billing from './billing/[id]/+page.server';
import CheckoutPage from './checkout/[id]/+page.svelte';
import * as checkout from './checkout/[id]/+page.server';
import Layout from './+layout.svelte';

const ORIGIN = 'http://127.0.0.1:5173';
const stripe = new Stripe(FAKE_SECRET_KEY);
let dir: string;

beforeAll(async () => {
	delete process.env.STRIPE_SECRET_KEY;
	dir = mkdtempSync(join(tmpdir(), 'tideward-fake-pages-'));
	// Nothing listens there: delivery is off, these tests look at the pages only.
	await startFakeStripe({
		dataDir: dir,
		origin: ORIGIN,
		webhookUrl: 'http://127.0.0.1:9/none',
		deliver: false
	});
});

afterAll(async () => {
	await stopFakeStripe();
	rmSync(dir, { recursive: true, force: true });
});

afterEach(() => {
	delete process.env.STRIPE_SECRET_KEY;
});

// The pages' server functions take SvelteKit's request event; these tests pass what they read.
type LoadEvent<F extends (...args: never[]) => unknown> = Parameters<F>[0];
const asEvent = <T>(value: object) => value as T;
type Loaded<F extends (...args: never[]) => unknown> = Exclude<Awaited<ReturnType<F>>, void>;

function loadCheckout(id: string) {
	return checkout.load(asEvent<LoadEvent<typeof checkout.load>>({ params: { id } })) as Loaded<
		typeof checkout.load
	>;
}

function post(fields: Record<string, string>) {
	const body = new FormData();
	for (const [k, v] of Object.entries(fields)) body.set(k, v);
	return new Request(`${ORIGIN}/fake-stripe`, { method: 'POST', body });
}

async function session(mode: 'payment' | 'subscription' = 'payment') {
	return stripe.checkout.sessions.create({
		mode,
		line_items: [
			{
				quantity: 1,
				price_data: {
					currency: 'usd',
					unit_amount: 2500,
					product_data: { name: 'Adopt a patient' },
					...(mode === 'subscription' ? { recurring: { interval: 'month' as const } } : {})
				}
			}
		],
		customer_email: 'page@example.org',
		success_url: `${ORIGIN}/adopt/thanks?session={CHECKOUT_SESSION_ID}`,
		cancel_url: `${ORIGIN}/adopt`
	});
}

async function pay(id: string, fields: Record<string, string>) {
	try {
		return await checkout.actions.pay(
			asEvent<LoadEvent<typeof checkout.actions.pay>>({ params: { id }, request: post(fields) })
		);
	} catch (thrown) {
		return thrown;
	}
}

describe('fake checkout page', () => {
	it('answers 404 outside fake mode', async () => {
		const s = await session();
		process.env.STRIPE_SECRET_KEY = 'sk_test_a_real_key_would_be_here';
		expect(() =>
			checkout.load(asEvent<LoadEvent<typeof checkout.load>>({ params: { id: s.id } }))
		).toThrow(expect.objectContaining({ status: 404 }));
		const thrown = await pay(s.id, { cardNumber: '4242424242424242', expiry: '12/34', cvc: '123' });
		expect(isHttpError(thrown, 404)).toBe(true);
	});

	it('answers 404 for an unknown session', () => {
		let thrown: unknown;
		try {
			void checkout.load(
				asEvent<LoadEvent<typeof checkout.load>>({ params: { id: 'cs_test_nope' } })
			);
		} catch (error) {
			thrown = error;
		}
		expect(isHttpError(thrown, 404)).toBe(true);
	});

	it('shows the gift, the test cards and a cancel link; a decline is announced', async () => {
		const s = await session();
		const data = loadCheckout(s.id);
		const page = render(CheckoutPage, {
			props: { data: data as never, form: null }
		}).body;
		expect(page).toContain('Adopt a patient');
		expect(page).toContain('$25.00');
		expect(page).toContain('4000 0000 0000 9995');
		expect(page).toContain(`href="${ORIGIN}/adopt"`);
		expect(page).toContain('page@example.org');

		const declined = await pay(s.id, {
			cardNumber: '4000000000009995',
			expiry: '12/34',
			cvc: '123',
			name: 'Sam Example'
		});
		expect(isActionFailure(declined)).toBe(true);
		const failure = declined as { status: number; data: { message: string } };
		expect(failure.status).toBe(400);
		expect(failure.data.message).toBe('Your card has insufficient funds.');
		const again = render(CheckoutPage, {
			props: { data: data as never, form: failure.data as never }
		}).body;
		expect(again).toMatch(/role="alert"[^>]*>\s*Your card has insufficient funds\./);
		expect(again).not.toContain('4000000000009995"'); // the number is not put back
	});

	it('redirects (303) to the success URL after paying with 4242', async () => {
		const s = await session();
		const result = await pay(s.id, {
			cardNumber: '4242 4242 4242 4242',
			expiry: '12/34',
			cvc: '123'
		});
		expect(isRedirect(result)).toBe(true);
		expect(result).toMatchObject({
			status: 303,
			location: `${ORIGIN}/adopt/thanks?session=${s.id}`
		});
		const done = loadCheckout(s.id);
		expect(done.checkout.status).toBe('complete');
	});

	it('wraps the pages in the test banner', () => {
		const body = render(Layout, { props: { children: (() => {}) as never } }).body;
		expect(body).toContain('Test payment page — no real money moves');
	});
});

describe('fake billing page', () => {
	it('changes the card and cancels the monthly gift at the period end', async () => {
		const s = await session('subscription');
		expect(
			isRedirect(await pay(s.id, { cardNumber: '4242424242424242', expiry: '12/34', cvc: '123' }))
		).toBe(true);
		const { customer, subscription } = await stripe.checkout.sessions.retrieve(s.id);
		const portal = await stripe.billingPortal.sessions.create({
			customer: customer as string,
			return_url: `${ORIGIN}/account`
		});
		const event = <F extends (...args: never[]) => unknown>(fields?: Record<string, string>) =>
			asEvent<LoadEvent<F>>({
				params: { id: portal.id },
				...(fields ? { request: post(fields) } : {})
			});

		const loadBilling = () =>
			billing.load(event<typeof billing.load>()) as Loaded<typeof billing.load>;
		const data = loadBilling();
		expect(data.card).toBe('VISA ending 4242, expires 12/2034');
		expect(data.subscriptions).toMatchObject([{ id: subscription, price: '$25.00 every month' }]);
		const page = render(BillingPage, { props: { data: data as never, form: null } }).body;
		expect(page).toContain(`href="${ORIGIN}/account"`);
		expect(page).toContain('Cancel this monthly gift');

		const refused = await billing.actions.card(
			event<typeof billing.actions.card>({ cardNumber: '1234', expiry: '12/34', cvc: '123' })
		);
		expect(isActionFailure(refused)).toBe(true);
		const saved = await billing.actions.card(
			event<typeof billing.actions.card>({
				cardNumber: '4000000000000341',
				expiry: '11/33',
				cvc: '123'
			})
		);
		expect(saved).toMatchObject({ done: 'The new card is saved.' });
		expect(loadBilling().card).toBe('VISA ending 0341, expires 11/2033');

		await billing.actions.cancel(
			event<typeof billing.actions.cancel>({ subscriptionId: subscription as string })
		);
		const sub = await stripe.subscriptions.retrieve(subscription as string);
		expect(sub.cancel_at_period_end).toBe(true);
		const after = loadBilling();
		const rendered = render(BillingPage, { props: { data: after as never, form: null } }).body;
		expect(rendered).toContain('Keep this monthly gift');
	});
});
