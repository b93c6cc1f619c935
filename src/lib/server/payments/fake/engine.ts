// What happens inside the fake payment service: creating checkout sessions, paying them with the
// documented test cards, renewals when the fake clock passes a period end, refunds, disputes and
// payouts, each with the events the real service sends. The API handlers (handlers.ts), the fake
// pages (src/routes/fake-stripe) and staff controls all go through here.
import { createHash } from 'node:crypto';
import Stripe from 'stripe';
import {
	ApiError,
	boolean,
	checkShape,
	integer,
	list,
	metadata,
	object,
	required,
	text,
	type Params
} from './form';
import {
	addInterval,
	DEFAULT_CURRENCY,
	DISPUTE_FEE,
	emptyList,
	processingFee,
	type FakeBalance,
	type FakeBalanceTransaction,
	type FakeCharge,
	type FakeCustomer,
	type FakeDispute,
	type FakeEvent,
	type FakeInvoice,
	type FakeInvoiceLine,
	type FakeInvoicePayment,
	type FakeLineItem,
	type FakeList,
	type FakePaymentIntent,
	type FakePaymentMethod,
	type FakePayout,
	type FakePlan,
	type FakePortalSession,
	type FakePrice,
	type FakeProduct,
	type FakeRefund,
	type FakeSession,
	type FakeSubscription,
	type FakeSubscriptionItem
} from './objects';
import { activeFake } from './runtime';
import type { ApiObject, CardBehaviour, FakeStore, SessionExtras } from './state';

const DAY = 86400;
/** Card payments become available for payout two days after the charge. */
const AVAILABLE_AFTER = 2 * DAY;
/** Checkout sessions expire after 24 hours unless `expires_at` says otherwise. */
const SESSION_LIFETIME = DAY;
const PAYOUT_DESTINATION = 'ba_fakeTidewardBank0000001';
const PORTAL_CONFIGURATION = 'bpc_fakeTidewardPortal00001';
const ACCOUNT_NAME = 'Local test account';

/** The test cards the fake knows, as the real service documents them. */
export const TEST_CARDS = [
	{ number: '4242424242424242', effect: 'Succeeds.' },
	{ number: '4000000000000002', effect: 'Declined: "Your card was declined."' },
	{ number: '4000000000009995', effect: 'Declined: "Your card has insufficient funds."' },
	{ number: '4000000000000259', effect: 'Succeeds, then the payment is disputed.' },
	{
		number: '4000000000000341',
		effect: 'Monthly gifts: the first payment succeeds, every renewal is declined.'
	},
	{
		number: '4000002500003155',
		effect: 'Asks for 3-D Secure, which this test page does not support: nothing is paid.'
	}
] as const;

export interface RequestInfo {
	id: string | null;
	idempotencyKey: string | null;
}

const NO_REQUEST: RequestInfo = { id: null, idempotencyKey: null };

export interface CardInput {
	cardNumber: string;
	name?: string;
	/** `MM/YY`, `MM / YY` or `MM/YYYY`; optional. */
	expiry?: string;
	cvc?: string;
	/** Used when the session has no e-mail of its own. */
	email?: string;
}

export type PayResult = { ok: true; redirectUrl: string } | { ok: false; message: string };
export type Result<T = object> = ({ ok: true } & T) | { ok: false; message: string };

type Judgement =
	| { kind: 'accept'; behaviour: CardBehaviour }
	| { kind: 'decline'; declineCode: string; message: string }
	| { kind: 'refuse'; code: string; message: string };

const DECLINED = { declineCode: 'generic_decline', message: 'Your card was declined.' };

function judgeCard(digits: string, use: 'payment' | 'subscription' | 'attach'): Judgement {
	switch (digits) {
		case '4242424242424242':
			return { kind: 'accept', behaviour: 'succeeds' };
		case '4000000000000259':
			return { kind: 'accept', behaviour: 'disputed' };
		case '4000000000000341':
			// Real: attaches to a customer, every charge fails. Here the first payment of a monthly
			// gift succeeds so that a failing renewal can be shown.
			return use === 'payment'
				? { kind: 'decline', ...DECLINED }
				: { kind: 'accept', behaviour: 'renewals_fail' };
		case '4000000000000002':
			return { kind: 'decline', ...DECLINED };
		case '4000000000009995':
			return {
				kind: 'decline',
				declineCode: 'insufficient_funds',
				message: 'Your card has insufficient funds.'
			};
		case '4000002500003155':
			return {
				kind: 'refuse',
				code: 'authentication_required',
				message:
					'This card asks for 3-D Secure authentication, which this test payment page does not support. Nothing was paid; try another test card.'
			};
		default:
			return {
				kind: 'refuse',
				code: 'incorrect_number',
				message: 'Your card number is incorrect.'
			};
	}
}

function checkExpiry(
	expiry: string | undefined,
	now: number
): string | { month: number; year: number } {
	if (expiry === undefined || expiry.trim() === '') return { month: 12, year: 2034 };
	const m = /^\s*(\d{1,2})\s*\/?\s*(\d{2}|\d{4})\s*$/.exec(expiry);
	if (!m) return "Your card's expiration date is incomplete.";
	const month = Number(m[1]);
	const year = m[2].length === 2 ? 2000 + Number(m[2]) : Number(m[2]);
	if (month < 1 || month > 12) return "Your card's expiration month is invalid.";
	const today = new Date(now * 1000);
	const thisYear = today.getUTCFullYear();
	if (year < thisYear) return "Your card's expiration year is in the past.";
	if (year === thisYear && month < today.getUTCMonth() + 1) {
		return "Your card's expiration date is in the past.";
	}
	if (year > thisYear + 50) return "Your card's expiration year is invalid.";
	return { month, year };
}

const EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]+$/;

function id(value: unknown): string | null {
	if (value == null) return null;
	if (typeof value === 'string') return value;
	return (value as { id: string }).id;
}

function money(cents: number, currency: string): string {
	return `${currency === 'usd' ? '$' : ''}${(cents / 100).toFixed(2)}${currency === 'usd' ? '' : ` ${currency.toUpperCase()}`}`;
}

function previousAttributes(
	before: Record<string, unknown>,
	after: Record<string, unknown>
): Record<string, unknown> {
	const previous: Record<string, unknown> = {};
	for (const key of Object.keys(after)) {
		if (JSON.stringify(before[key]) !== JSON.stringify(after[key])) previous[key] = before[key];
	}
	return previous;
}

// ------------------------------------------------------------------------------------------------

export interface EngineHooks {
	/** The public origin of the app, for the fake pages' URLs. */
	origin(): string;
	/** Called after an event is stored (the webhook queue picks it up). */
	eventCreated(eventId: string): void;
}

export class FakeEngine {
	constructor(
		readonly store: FakeStore,
		private readonly hooks: EngineHooks
	) {}

	now(): number {
		return this.store.now();
	}

	private get state() {
		return this.store.state;
	}

	// --- reading ---------------------------------------------------------------------------------

	/** An object of one type by id, or a 404 `resource_missing` as the API answers. */
	find<T extends ApiObject>(type: string, objectId: string, param = 'id', status = 404): T {
		const found = this.store.get<T>(objectId);
		if (!found || found.object !== type) {
			const error = ApiError.missing(type, objectId, param);
			throw status === 404 ? error : new ApiError(status, error.body);
		}
		return found;
	}

	/** A copy of an object as the API shows it now (fields that depend on the time filled in). */
	render<T extends ApiObject>(stored: T): T {
		const out = structuredClone(stored) as ApiObject;
		const now = this.now();
		if (out.object === 'balance_transaction') {
			out.status = (out.available_on as number) <= now ? 'available' : 'pending';
		} else if (out.object === 'checkout.session') {
			out.url =
				out.status === 'open' ? `${this.hooks.origin()}/fake-stripe/checkout/${out.id}` : null;
		} else if (out.object === 'billing_portal.session') {
			out.url = `${this.hooks.origin()}/fake-stripe/billing/${out.id}`;
		} else if (out.object === 'dispute') {
			for (const txn of out.balance_transactions as FakeBalanceTransaction[]) {
				txn.status = txn.available_on <= now ? 'available' : 'pending';
			}
		}
		return out as T;
	}

	/** Applies `expand[]` paths (dotted, up to four levels, `data.` for lists). */
	expand<T extends ApiObject | FakeList<unknown>>(value: T, paths: string[]): T {
		for (const path of paths) {
			const segments = path.split('.');
			if (segments.length > 4) {
				throw ApiError.invalid(
					`You cannot expand more than 4 levels of a property. Property: ${path}`,
					'expand'
				);
			}
			this.expandPath(value as unknown as Record<string, unknown>, segments, path);
		}
		return value;
	}

	private expandPath(target: Record<string, unknown>, segments: string[], path: string): void {
		const [head, ...rest] = segments;
		if (head === 'data' && target.object === 'list') {
			for (const item of target.data as Record<string, unknown>[]) {
				if (rest.length) this.expandPath(item, rest, path);
			}
			return;
		}
		let value = target[head];
		const cannot = () => ApiError.invalid(`This property cannot be expanded (${head}).`, 'expand');
		if (typeof value === 'string') {
			const stored = this.store.get(value);
			if (!stored) throw cannot();
			value = this.render(stored);
			target[head] = value;
		} else if (value === undefined) {
			value = this.includable(target, head);
			if (value === undefined) throw cannot();
			target[head] = value;
		} else if (value === null) {
			return;
		} else if (typeof value !== 'object') {
			throw cannot();
		}
		if (!rest.length) return;
		if (Array.isArray(value)) {
			for (const item of value) this.expandPath(item as Record<string, unknown>, rest, path);
		} else this.expandPath(value as Record<string, unknown>, rest, path);
	}

	/** Fields the API leaves out unless asked for. */
	private includable(target: Record<string, unknown>, field: string): unknown {
		const targetId = target.id as string;
		if (target.object === 'checkout.session' && field === 'line_items') {
			return this.sessionLineItems(targetId);
		}
		if (target.object === 'invoice' && field === 'payments') {
			return emptyList(
				`/v1/invoices/${targetId}/payments`,
				this.invoicePayments(targetId).map((p) => this.render(p))
			);
		}
		if (target.object === 'charge' && field === 'refunds') {
			return emptyList(
				`/v1/charges/${targetId}/refunds`,
				this.store
					.all<FakeRefund & ApiObject>('refund')
					.filter((r) => r.charge === targetId)
					.map((r) => this.render(r))
			);
		}
		return undefined;
	}

	sessionLineItems(sessionId: string): FakeList<FakeLineItem> {
		const extras = this.state.sessions[sessionId];
		return emptyList(
			`/v1/checkout/sessions/${sessionId}/line_items`,
			structuredClone((extras?.lineItems ?? []) as unknown as FakeLineItem[])
		);
	}

	invoicePayments(invoiceId: string): (FakeInvoicePayment & ApiObject)[] {
		return this.store
			.all<FakeInvoicePayment & ApiObject>('invoice_payment')
			.filter((p) => p.invoice === invoiceId);
	}

	// --- events ----------------------------------------------------------------------------------

	private emit(
		type: Stripe.Event.Type,
		subject: ApiObject,
		options: { at?: number; previous?: Record<string, unknown>; request?: RequestInfo } = {}
	): FakeEvent {
		const request = options.request ?? NO_REQUEST;
		const event: FakeEvent & ApiObject = {
			id: this.store.newId('evt_'),
			object: 'event',
			api_version: Stripe.API_VERSION,
			created: options.at ?? this.now(),
			data: {
				object: this.render(subject),
				...(options.previous && Object.keys(options.previous).length
					? { previous_attributes: options.previous }
					: {})
			},
			livemode: false,
			pending_webhooks: 1,
			request: { id: request.id, idempotency_key: request.idempotencyKey },
			type
		};
		this.store.put(event);
		this.hooks.eventCreated(event.id);
		return event;
	}

	// --- building blocks ---------------------------------------------------------------------------

	private newCustomer(email: string, name: string | null, at: number): FakeCustomer & ApiObject {
		return this.store.put<FakeCustomer & ApiObject>({
			id: this.store.newId('cus_', 14),
			object: 'customer',
			address: null,
			balance: 0,
			created: at,
			currency: null,
			default_source: null,
			delinquent: false,
			description: null,
			email,
			invoice_prefix: this.store.newId('', 8).toUpperCase(),
			invoice_settings: {
				custom_fields: null,
				default_payment_method: null,
				footer: null,
				rendering_options: null
			},
			livemode: false,
			metadata: {},
			name,
			next_invoice_sequence: 1,
			phone: null,
			preferred_locales: [],
			shipping: null,
			tax_exempt: 'none'
		});
	}

	private newPaymentMethod(
		digits: string,
		expiry: { month: number; year: number },
		billing: { email: string; name: string | null },
		behaviour: CardBehaviour,
		customer: string | null,
		at: number
	): FakePaymentMethod & ApiObject {
		const pm = this.store.put<FakePaymentMethod & ApiObject>({
			id: this.store.newId('pm_'),
			object: 'payment_method',
			billing_details: {
				address: null,
				email: billing.email,
				name: billing.name,
				phone: null,
				tax_id: null
			},
			card: {
				brand: 'visa',
				country: 'US',
				exp_month: expiry.month,
				exp_year: expiry.year,
				fingerprint: createHash('sha256').update(`fake-card:${digits}`).digest('hex').slice(0, 16),
				funding: 'credit',
				last4: digits.slice(-4)
			},
			created: at,
			customer,
			livemode: false,
			metadata: {},
			type: 'card'
		});
		this.state.cards[pm.id] = behaviour;
		return pm;
	}

	private newProduct(
		name: string,
		description: string | null,
		at: number
	): FakeProduct & ApiObject {
		return this.store.put<FakeProduct & ApiObject>({
			id: this.store.newId('prod_', 14),
			object: 'product',
			active: true,
			created: at,
			description,
			images: [],
			livemode: false,
			marketing_features: [],
			metadata: {},
			name,
			package_dimensions: null,
			shippable: null,
			tax_details: null,
			type: 'service',
			updated: at,
			url: null
		});
	}

	private newPrice(
		product: string,
		currency: string,
		unitAmount: number,
		recurring: { interval: Stripe.Price.Recurring.Interval; interval_count: number } | null,
		at: number
	): FakePrice & ApiObject {
		return this.store.put<FakePrice & ApiObject>({
			id: this.store.newId('price_'),
			object: 'price',
			active: false, // inline prices (price_data) are not offered again
			billing_scheme: 'per_unit',
			created: at,
			currency,
			custom_unit_amount: null,
			livemode: false,
			lookup_key: null,
			metadata: {},
			nickname: null,
			product,
			recurring: recurring
				? { ...recurring, meter: null, trial_period_days: null, usage_type: 'licensed' }
				: null,
			tax_behavior: 'unspecified',
			tiers_mode: null,
			transform_quantity: null,
			type: recurring ? 'recurring' : 'one_time',
			unit_amount: unitAmount,
			unit_amount_decimal: String(unitAmount)
		});
	}

	private planOf(price: FakePrice): FakePlan {
		const recurring = price.recurring!;
		return {
			id: price.id,
			object: 'plan',
			active: price.active,
			amount: price.unit_amount,
			amount_decimal: price.unit_amount_decimal,
			billing_scheme: 'per_unit',
			created: price.created,
			currency: price.currency,
			interval: recurring.interval,
			interval_count: recurring.interval_count,
			livemode: false,
			metadata: {},
			meter: null,
			nickname: null,
			product: price.product as string,
			tiers_mode: null,
			transform_usage: null,
			trial_period_days: null,
			usage_type: 'licensed'
		};
	}

	private newTransaction(fields: {
		amount: number;
		fee: number;
		currency: string;
		type: Stripe.BalanceTransaction.Type;
		reportingCategory: string;
		source: string;
		description: string | null;
		at: number;
		availableOn?: number;
		feeDescription?: string;
	}): FakeBalanceTransaction & ApiObject {
		const availableOn = fields.availableOn ?? fields.at;
		return this.store.put<FakeBalanceTransaction & ApiObject>({
			id: this.store.newId('txn_'),
			object: 'balance_transaction',
			amount: fields.amount,
			available_on: availableOn,
			balance_type: 'payments',
			created: fields.at,
			currency: fields.currency,
			description: fields.description,
			exchange_rate: null,
			fee: fields.fee,
			fee_details: fields.fee
				? [
						{
							amount: fields.fee,
							application: null,
							currency: fields.currency,
							description: fields.feeDescription ?? 'Processing fees',
							type: 'stripe_fee'
						}
					]
				: [],
			net: fields.amount - fields.fee,
			reporting_category: fields.reportingCategory,
			source: fields.source,
			status: availableOn <= this.now() ? 'available' : 'pending',
			type: fields.type
		});
	}

	private newPaymentIntent(fields: {
		amount: number;
		currency: string;
		customer: string | null;
		description: string | null;
		metadata: Record<string, string>;
		receiptEmail: string | null;
		at: number;
	}): FakePaymentIntent & ApiObject {
		const piId = this.store.newId('pi_');
		return this.store.put<FakePaymentIntent & ApiObject>({
			id: piId,
			object: 'payment_intent',
			amount: fields.amount,
			amount_capturable: 0,
			amount_received: 0,
			application: null,
			application_fee_amount: null,
			canceled_at: null,
			cancellation_reason: null,
			capture_method: 'automatic_async',
			client_secret: `${piId}_secret_${this.store.newId('', 25)}`,
			confirmation_method: 'automatic',
			created: fields.at,
			currency: fields.currency,
			customer: fields.customer,
			description: fields.description,
			last_payment_error: null,
			latest_charge: null,
			livemode: false,
			metadata: fields.metadata,
			next_action: null,
			on_behalf_of: null,
			payment_method: null,
			payment_method_types: ['card'],
			receipt_email: fields.receiptEmail,
			review: null,
			setup_future_usage: null,
			shipping: null,
			statement_descriptor: null,
			statement_descriptor_suffix: null,
			status: 'requires_payment_method',
			transfer_group: null
		});
	}

	/**
	 * One attempt to charge a payment intent with a card. On success the charge has a balance
	 * transaction (fee and net) that becomes available two days later.
	 */
	private attemptCharge(
		pi: FakePaymentIntent & ApiObject,
		pm: FakePaymentMethod & ApiObject,
		decline: { declineCode: string; message: string } | null,
		at: number
	): { charge: FakeCharge & ApiObject; succeeded: boolean } {
		const charge = this.store.put<FakeCharge & ApiObject>({
			id: this.store.newId('ch_'),
			object: 'charge',
			amount: pi.amount,
			amount_captured: decline ? 0 : pi.amount,
			amount_refunded: 0,
			application: null,
			application_fee: null,
			application_fee_amount: null,
			balance_transaction: null,
			billing_details: pm.billing_details,
			calculated_statement_descriptor: 'LOCAL TEST',
			captured: !decline,
			created: at,
			currency: pi.currency,
			customer: id(pi.customer),
			description: pi.description,
			disputed: false,
			failure_balance_transaction: null,
			failure_code: decline ? 'card_declined' : null,
			failure_message: decline ? decline.message : null,
			fraud_details: {},
			livemode: false,
			metadata: { ...pi.metadata },
			on_behalf_of: null,
			outcome: decline
				? {
						advice_code: null,
						network_advice_code: null,
						network_decline_code: null,
						network_status: 'declined_by_network',
						reason: decline.declineCode,
						risk_level: 'normal',
						seller_message: 'The bank did not return any further details with this decline.',
						type: 'issuer_declined'
					}
				: {
						advice_code: null,
						network_advice_code: null,
						network_decline_code: null,
						network_status: 'approved_by_network',
						reason: null,
						risk_level: 'normal',
						seller_message: 'Payment complete.',
						type: 'authorized'
					},
			paid: !decline,
			payment_intent: pi.id,
			payment_method: pm.id,
			payment_method_details: { type: 'card', card: pm.card },
			receipt_email: pi.receipt_email,
			receipt_number: null,
			receipt_url: null,
			refunded: false,
			review: null,
			shipping: null,
			source_transfer: null,
			statement_descriptor: null,
			statement_descriptor_suffix: null,
			status: decline ? 'failed' : 'succeeded',
			transfer_data: null,
			transfer_group: null
		});
		pi.latest_charge = charge.id;
		if (decline) {
			pi.status = 'requires_payment_method';
			pi.payment_method = null;
			pi.last_payment_error = {
				type: 'card_error',
				code: 'card_declined',
				decline_code: decline.declineCode,
				message: decline.message,
				charge: charge.id,
				doc_url: 'https://stripe.com/docs/error-codes/card-declined'
			};
			return { charge, succeeded: false };
		}
		const fee = processingFee(pi.amount);
		const txn = this.newTransaction({
			amount: pi.amount,
			fee,
			currency: pi.currency,
			type: 'charge',
			reportingCategory: 'charge',
			source: charge.id,
			description: pi.description,
			at,
			availableOn: at + AVAILABLE_AFTER
		});
		charge.balance_transaction = txn.id;
		pi.status = 'succeeded';
		pi.amount_received = pi.amount;
		pi.payment_method = pm.id;
		pi.last_payment_error = null;
		return { charge, succeeded: true };
	}

	// --- checkout sessions ---------------------------------------------------------------------------

	createCheckoutSession(params: Params, request: RequestInfo = NO_REQUEST): FakeSession {
		void request; // creating a session sends no event
		checkShape(params, {
			mode: 'scalar',
			line_items: [
				{
					price: 'scalar',
					quantity: 'scalar',
					price_data: {
						currency: 'scalar',
						unit_amount: 'scalar',
						product: 'scalar',
						product_data: {
							name: 'scalar',
							description: 'scalar',
							metadata: 'map',
							images: 'list'
						},
						recurring: { interval: 'scalar', interval_count: 'scalar' },
						tax_behavior: 'scalar'
					}
				}
			],
			metadata: 'map',
			customer: 'scalar',
			customer_email: 'scalar',
			customer_creation: 'scalar',
			client_reference_id: 'scalar',
			success_url: 'scalar',
			cancel_url: 'scalar',
			payment_intent_data: { metadata: 'map', description: 'scalar', receipt_email: 'scalar' },
			subscription_data: { metadata: 'map', description: 'scalar' },
			payment_method_types: 'list',
			expires_at: 'scalar',
			locale: 'scalar',
			submit_type: 'scalar',
			billing_address_collection: 'scalar',
			expand: 'list'
		});
		const at = this.now();
		const mode = required(params, 'mode');
		if (mode !== 'payment' && mode !== 'subscription') {
			throw ApiError.invalid(
				`Invalid mode: ${mode}. The local test service supports payment and subscription.`,
				'mode'
			);
		}
		const successUrl = required(params, 'success_url');
		const cancelUrl = text(params, 'cancel_url') ?? null;
		for (const [name, url] of [
			['success_url', successUrl],
			['cancel_url', cancelUrl]
		] as const) {
			if (url !== null && !/^https?:\/\/\S+$/.test(url)) {
				throw ApiError.invalid(`Not a valid URL`, name, 'url_invalid');
			}
		}
		const customerId = text(params, 'customer') ?? null;
		const customerEmail = text(params, 'customer_email') ?? null;
		if (customerId && customerEmail) {
			throw ApiError.invalid(
				'You may only specify one of these parameters: customer, customer_email.',
				'customer_email'
			);
		}
		if (customerId) this.find('customer', customerId, 'customer', 400);
		if (customerEmail !== null && !EMAIL.test(customerEmail)) {
			throw ApiError.invalid(
				'Invalid email address: ' + customerEmail,
				'customer_email',
				'email_invalid'
			);
		}
		const customerCreation = text(params, 'customer_creation') ?? 'if_required';
		if (customerCreation !== 'always' && customerCreation !== 'if_required') {
			throw ApiError.invalid(`Invalid customer_creation: ${customerCreation}`, 'customer_creation');
		}
		if (customerCreation === 'always' && mode !== 'payment') {
			throw ApiError.invalid(
				'`customer_creation` can only be used in `payment` mode.',
				'customer_creation'
			);
		}
		const paymentIntentData = object(params, 'payment_intent_data');
		const subscriptionData = object(params, 'subscription_data');
		if (paymentIntentData && mode !== 'payment') {
			throw ApiError.invalid(
				'You can not pass `payment_intent_data` in `subscription` mode.',
				'payment_intent_data'
			);
		}
		if (subscriptionData && mode !== 'subscription') {
			throw ApiError.invalid(
				'You can not pass `subscription_data` in `payment` mode.',
				'subscription_data'
			);
		}
		const methodTypes = list(params, 'payment_method_types');
		if (methodTypes.some((t) => t !== 'card')) {
			throw ApiError.invalid(
				'The local test service accepts only the card payment method type.',
				'payment_method_types'
			);
		}

		const items = list(params, 'line_items') as Params[];
		if (!items.length) {
			throw ApiError.invalid(
				'Missing required param: line_items.',
				'line_items',
				'parameter_missing'
			);
		}
		const lineItems: FakeLineItem[] = [];
		let currency: string | null = null;
		let interval: string | null = null;
		items.forEach((item, i) => {
			const prefix = `line_items[${i}]`;
			const quantity = integer(item, 'quantity', prefix, { min: 1, max: 999_999 });
			if (quantity === undefined) {
				throw ApiError.invalid(
					`Missing required param: ${prefix}[quantity].`,
					`${prefix}[quantity]`,
					'parameter_missing'
				);
			}
			let price: FakePrice;
			let description: string;
			const priceId = text(item, 'price');
			const data = object(item, 'price_data');
			if (priceId && data) {
				throw ApiError.invalid(
					`You may only specify one of these parameters: ${prefix}[price], ${prefix}[price_data].`,
					prefix
				);
			}
			if (priceId) {
				price = this.find<FakePrice & ApiObject>('price', priceId, `${prefix}[price]`, 400);
				description = this.find<FakeProduct & ApiObject>('product', price.product as string).name;
			} else if (data) {
				const p = `${prefix}[price_data]`;
				const cur = required(data, 'currency', p).toLowerCase();
				if (!/^[a-z]{3}$/.test(cur))
					throw ApiError.invalid(`Invalid currency: ${cur}`, `${p}[currency]`);
				const unitAmount = integer(data, 'unit_amount', p, { min: 0 });
				if (unitAmount === undefined) {
					throw ApiError.invalid(
						`Missing required param: ${p}[unit_amount].`,
						`${p}[unit_amount]`,
						'parameter_missing'
					);
				}
				const productData = object(data, 'product_data');
				const productId = text(data, 'product');
				let product: FakeProduct;
				if (productId && productData) {
					throw ApiError.invalid(
						`You may only specify one of these parameters: ${p}[product], ${p}[product_data].`,
						p
					);
				} else if (productId) {
					product = this.find<FakeProduct & ApiObject>('product', productId, `${p}[product]`, 400);
				} else if (productData) {
					product = this.newProduct(
						required(productData, 'name', `${p}[product_data]`),
						text(productData, 'description') ?? null,
						at
					);
					product.metadata = metadata(productData, 'metadata', `${p}[product_data]`) ?? {};
				} else {
					throw ApiError.invalid(
						`Missing required param: ${p}[product_data].`,
						`${p}[product_data]`,
						'parameter_missing'
					);
				}
				const recurringData = object(data, 'recurring');
				let recurring: {
					interval: Stripe.Price.Recurring.Interval;
					interval_count: number;
				} | null = null;
				if (recurringData) {
					const every = required(recurringData, 'interval', `${p}[recurring]`);
					if (!['day', 'week', 'month', 'year'].includes(every)) {
						throw ApiError.invalid(`Invalid interval: ${every}`, `${p}[recurring][interval]`);
					}
					recurring = {
						interval: every as Stripe.Price.Recurring.Interval,
						interval_count:
							integer(recurringData, 'interval_count', `${p}[recurring]`, { min: 1, max: 12 }) ?? 1
					};
				}
				price = this.newPrice(product.id, cur, unitAmount, recurring, at);
				description = product.name;
			} else {
				throw ApiError.invalid(
					`You must specify either \`price\` or \`price_data\` in ${prefix}.`,
					prefix
				);
			}
			if (mode === 'payment' && price.recurring) {
				throw ApiError.invalid(
					'You specified `payment` mode but passed a recurring price. Either switch to `subscription` mode or use only one-time prices.',
					`${prefix}[price_data][recurring]`
				);
			}
			if (mode === 'subscription' && !price.recurring) {
				throw ApiError.invalid(
					'In `subscription` mode the local test service accepts recurring prices only.',
					`${prefix}[price_data][recurring]`
				);
			}
			if (currency && price.currency !== currency) {
				throw ApiError.invalid('All line items must use the same currency.', `${prefix}`);
			}
			currency = price.currency;
			const every = price.recurring
				? `${price.recurring.interval}:${price.recurring.interval_count}`
				: null;
			if (interval && every !== interval) {
				throw ApiError.invalid(
					'All prices on a subscription must have the same `recurring.interval` and `recurring.interval_count`.',
					prefix
				);
			}
			interval = every;
			const amount = (price.unit_amount ?? 0) * quantity;
			lineItems.push({
				id: this.store.newId('li_'),
				object: 'item',
				adjustable_quantity: null,
				amount_discount: 0,
				amount_subtotal: amount,
				amount_tax: 0,
				amount_total: amount,
				currency: price.currency,
				description,
				metadata: {},
				price: structuredClone(price),
				quantity
			});
		});
		const total = lineItems.reduce((sum, li) => sum + li.amount_total, 0);
		if (currency === 'usd' && total < 50) {
			throw ApiError.invalid(
				"The Checkout Session's total amount due must add up to at least $0.50 usd",
				'line_items'
			);
		}
		let expiresAt = at + SESSION_LIFETIME;
		const expiresParam = integer(params, 'expires_at', '', { min: 0, max: 9_999_999_999 });
		if (expiresParam !== undefined) {
			if (expiresParam < at + 1800 || expiresParam > at + SESSION_LIFETIME) {
				throw ApiError.invalid(
					'The `expires_at` timestamp must be between 30 minutes and 24 hours from Checkout Session creation.',
					'expires_at'
				);
			}
			expiresAt = expiresParam;
		}
		const sessionId = this.store.newId('cs_test_', 58);
		const session = this.store.put<FakeSession & ApiObject>({
			id: sessionId,
			object: 'checkout.session',
			after_expiration: null,
			allow_promotion_codes: null,
			amount_subtotal: total,
			amount_total: total,
			billing_address_collection: null,
			cancel_url: cancelUrl,
			client_reference_id: text(params, 'client_reference_id') ?? null,
			client_secret: null,
			consent: null,
			consent_collection: null,
			created: at,
			currency,
			custom_fields: [],
			customer: customerId,
			customer_creation: mode === 'payment' ? customerCreation : null,
			customer_details: null,
			customer_email: customerEmail,
			expires_at: expiresAt,
			invoice: null,
			livemode: false,
			locale: null,
			metadata: metadata(params) ?? {},
			mode,
			payment_intent: null,
			payment_link: null,
			payment_method_collection: mode === 'subscription' ? 'always' : null,
			payment_method_types: ['card'],
			payment_status: 'unpaid',
			recovered_from: null,
			setup_intent: null,
			shipping_address_collection: null,
			shipping_cost: null,
			shipping_options: [],
			status: 'open',
			submit_type: null,
			subscription: null,
			success_url: successUrl,
			total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
			ui_mode: 'hosted_page',
			url: null
		});
		this.state.sessions[sessionId] = {
			lineItems: lineItems as unknown as ApiObject[],
			paymentIntentData: {
				metadata: paymentIntentData
					? (metadata(paymentIntentData, 'metadata', 'payment_intent_data') ?? {})
					: {},
				description: paymentIntentData ? (text(paymentIntentData, 'description') ?? null) : null
			},
			subscriptionData: {
				metadata: subscriptionData
					? (metadata(subscriptionData, 'metadata', 'subscription_data') ?? {})
					: {},
				description: subscriptionData ? (text(subscriptionData, 'description') ?? null) : null
			},
			customerCreation
		};
		this.store.save();
		return this.render(session);
	}

	expireSession(sessionId: string, request: RequestInfo = NO_REQUEST): FakeSession {
		this.tick();
		const session = this.find<FakeSession & ApiObject>('checkout.session', sessionId);
		if (session.status !== 'open') {
			throw ApiError.invalid(
				`Only Checkout Sessions with a status of \`open\` can be expired. This session is ${session.status}.`
			);
		}
		this.expire(session, this.now(), request);
		this.store.save();
		return this.render(session);
	}

	private expire(session: FakeSession & ApiObject, at: number, request: RequestInfo = NO_REQUEST) {
		session.status = 'expired';
		this.emit('checkout.session.expired', session, { at, request });
	}

	/** Pays an open checkout session with a test card, as the fake checkout page does. */
	payCheckoutSession(sessionId: string, input: CardInput): PayResult {
		this.tick();
		const session = this.store.get<FakeSession & ApiObject>(sessionId);
		if (!session || session.object !== 'checkout.session') {
			return { ok: false, message: 'This payment page does not exist.' };
		}
		if (session.status === 'complete') {
			return { ok: false, message: 'This payment has already been made.' };
		}
		if (session.status === 'expired') {
			return { ok: false, message: 'This payment page has expired. Nothing was paid.' };
		}
		const extras = this.state.sessions[session.id] as SessionExtras;
		const at = this.now();
		const existingCustomer = session.customer
			? this.store.get<FakeCustomer & ApiObject>(session.customer as string)
			: undefined;
		const email = (session.customer_email ?? existingCustomer?.email ?? input.email ?? '').trim();
		if (!EMAIL.test(email)) return { ok: false, message: 'Enter a valid e-mail address.' };
		const name = input.name?.trim() || null;
		const digits = input.cardNumber.replace(/[\s-]/g, '');
		const judgement = judgeCard(digits, session.mode === 'payment' ? 'payment' : 'subscription');
		if (judgement.kind === 'refuse') return { ok: false, message: judgement.message };
		const expiry = checkExpiry(input.expiry, at);
		if (typeof expiry === 'string') return { ok: false, message: expiry };
		if (input.cvc !== undefined && !/^\d{3,4}$/.test(input.cvc.trim())) {
			return { ok: false, message: "Your card's security code is incomplete." };
		}
		const amount = session.amount_total ?? 0;
		const currency = session.currency ?? DEFAULT_CURRENCY;
		const behaviour = judgement.kind === 'accept' ? judgement.behaviour : 'succeeds';
		const decline = judgement.kind === 'decline' ? judgement : null;

		if (session.mode === 'payment') {
			let pi = session.payment_intent
				? this.store.get<FakePaymentIntent & ApiObject>(session.payment_intent as string)
				: undefined;
			const newPi = !pi;
			pi ??= this.newPaymentIntent({
				amount,
				currency,
				customer: existingCustomer?.id ?? null,
				description: extras.paymentIntentData.description,
				metadata: { ...extras.paymentIntentData.metadata },
				receiptEmail: null,
				at
			});
			session.payment_intent = pi.id;
			let customer = existingCustomer;
			let newCustomer = false;
			if (!customer && !decline && extras.customerCreation === 'always') {
				customer = this.newCustomer(email, name, at);
				newCustomer = true;
			}
			if (customer) pi.customer = customer.id;
			if (newPi) this.emit('payment_intent.created', pi, { at });
			const pm = this.newPaymentMethod(digits, expiry, { email, name }, behaviour, null, at);
			const { charge, succeeded } = this.attemptCharge(pi, pm, decline, at);
			if (!succeeded) {
				this.emit('charge.failed', charge, { at });
				this.emit('payment_intent.payment_failed', pi, { at });
				this.store.save();
				return { ok: false, message: decline!.message };
			}
			if (newCustomer && customer) this.emit('customer.created', customer, { at });
			this.complete(session, { email, name, customer: customer?.id ?? null });
			this.emit('charge.succeeded', charge, { at });
			this.emit('payment_intent.succeeded', pi, { at });
			this.emit('checkout.session.completed', session, { at });
			if (behaviour === 'disputed') this.dispute(charge, at);
			this.store.save();
			return { ok: true, redirectUrl: this.successUrl(session) };
		}

		// Subscription mode: a declined card leaves nothing behind; the page asks for another.
		if (decline) return { ok: false, message: decline.message };
		let customer = existingCustomer;
		const newCustomer = !customer;
		customer ??= this.newCustomer(email, name, at);
		const pm = this.newPaymentMethod(digits, expiry, { email, name }, behaviour, customer.id, at);
		customer.invoice_settings.default_payment_method = pm.id;
		customer.currency = currency;
		const subscription = this.newSubscription(session, extras, customer, pm, at);
		const invoice = this.newInvoice(subscription, customer, 'subscription_create', at);
		const payment = this.payInvoice(invoice, pm, at);
		if (!payment.succeeded) {
			// Not reached with the test cards (a renewal-failing card succeeds the first time).
			return { ok: false, message: 'Your card was declined.' };
		}
		session.invoice = invoice.id;
		session.subscription = subscription.id;
		this.complete(session, { email, name, customer: customer.id });
		if (newCustomer) this.emit('customer.created', customer, { at });
		this.emit('customer.subscription.created', subscription, { at });
		this.emitInvoicePayment(invoice, payment, at);
		this.emit('checkout.session.completed', session, { at });
		if (behaviour === 'disputed') this.dispute(payment.charge, at);
		this.store.save();
		return { ok: true, redirectUrl: this.successUrl(session) };
	}

	private complete(
		session: FakeSession & ApiObject,
		who: { email: string; name: string | null; customer: string | null }
	) {
		session.status = 'complete';
		session.payment_status = 'paid';
		session.customer = who.customer;
		session.customer_details = {
			address: null,
			business_name: null,
			email: who.email,
			individual_name: null,
			name: who.name,
			phone: null,
			tax_exempt: 'none',
			tax_ids: []
		};
	}

	private successUrl(session: FakeSession): string {
		return (session.success_url ?? '').replaceAll('{CHECKOUT_SESSION_ID}', session.id);
	}

	// --- subscriptions and invoices --------------------------------------------------------------------

	private newSubscription(
		session: FakeSession,
		extras: SessionExtras,
		customer: FakeCustomer,
		pm: FakePaymentMethod,
		at: number
	): FakeSubscription & ApiObject {
		const subId = this.store.newId('sub_');
		const firstPrice = (extras.lineItems[0] as unknown as FakeLineItem).price;
		const recurring = firstPrice.recurring!;
		const periodEnd = addInterval(at, recurring.interval, recurring.interval_count);
		const items = (extras.lineItems as unknown as FakeLineItem[]).map(
			(li): FakeSubscriptionItem => ({
				id: this.store.newId('si_', 14),
				object: 'subscription_item',
				billing_thresholds: null,
				created: at,
				current_period_end: periodEnd,
				current_period_start: at,
				discounts: [],
				metadata: {},
				plan: this.planOf(li.price),
				price: structuredClone(li.price),
				quantity: li.quantity ?? 1,
				subscription: subId,
				tax_rates: []
			})
		);
		return this.store.put<FakeSubscription & ApiObject>({
			id: subId,
			object: 'subscription',
			application: null,
			application_fee_percent: null,
			billing_cycle_anchor: at,
			billing_thresholds: null,
			cancel_at: null,
			cancel_at_period_end: false,
			canceled_at: null,
			cancellation_details: { comment: null, feedback: null, feedback_option: null, reason: null },
			collection_method: 'charge_automatically',
			created: at,
			currency: session.currency ?? DEFAULT_CURRENCY,
			customer: customer.id,
			days_until_due: null,
			default_payment_method: pm.id,
			default_source: null,
			description: extras.subscriptionData.description,
			discounts: [],
			ended_at: null,
			items: emptyList(`/v1/subscription_items?subscription=${subId}`, items),
			latest_invoice: null,
			livemode: false,
			metadata: { ...extras.subscriptionData.metadata },
			next_pending_invoice_item_invoice: null,
			on_behalf_of: null,
			pause_collection: null,
			pending_setup_intent: null,
			pending_update: null,
			schedule: null,
			start_date: at,
			status: 'active',
			test_clock: null,
			transfer_data: null,
			trial_end: null,
			trial_start: null
		});
	}

	private newInvoice(
		subscription: FakeSubscription & ApiObject,
		customer: FakeCustomer & ApiObject,
		reason: 'subscription_create' | 'subscription_cycle',
		at: number,
		usagePeriod: { start: number; end: number } = { start: at, end: at }
	): FakeInvoice & ApiObject {
		const invoiceId = this.store.newId('in_');
		const lines = subscription.items.data.map((item): FakeInvoiceLine => {
			const amount = (item.price.unit_amount ?? 0) * (item.quantity ?? 1);
			const productName =
				this.store.get<FakeProduct & ApiObject>(item.price.product as string)?.name ?? 'Item';
			return {
				id: this.store.newId('il_'),
				object: 'line_item',
				amount,
				currency: item.price.currency,
				description: `${item.quantity ?? 1} × ${productName} (at ${money(item.price.unit_amount ?? 0, item.price.currency)} / ${item.price.recurring?.interval})`,
				discount_amounts: [],
				discountable: true,
				discounts: [],
				invoice: invoiceId,
				livemode: false,
				metadata: {},
				parent: {
					invoice_item_details: null,
					subscription_item_details: {
						invoice_item: null,
						proration: false,
						proration_details: { credited_items: null },
						subscription: subscription.id,
						subscription_item: item.id
					},
					type: 'subscription_item_details'
				},
				period: { start: item.current_period_start, end: item.current_period_end },
				pretax_credit_amounts: [],
				pricing: {
					type: 'price_details',
					price_details: { price: item.price.id, product: item.price.product as string },
					unit_amount_decimal: String(item.price.unit_amount ?? 0)
				},
				quantity: item.quantity ?? 1,
				subscription: subscription.id,
				subtotal: amount,
				taxes: []
			};
		});
		const total = lines.reduce((sum, l) => sum + l.amount, 0);
		const number = `${customer.invoice_prefix}-${String(customer.next_invoice_sequence ?? 1).padStart(4, '0')}`;
		customer.next_invoice_sequence = (customer.next_invoice_sequence ?? 1) + 1;
		const invoice = this.store.put<FakeInvoice & ApiObject>({
			id: invoiceId,
			object: 'invoice',
			account_country: 'US',
			account_name: ACCOUNT_NAME,
			amount_due: total,
			amount_overpaid: 0,
			amount_paid: 0,
			amount_remaining: total,
			amount_shipping: 0,
			application: null,
			attempt_count: 0,
			attempted: false,
			automatically_finalizes_at: null,
			billing_reason: reason,
			collection_method: 'charge_automatically',
			created: at,
			currency: subscription.currency,
			customer: customer.id,
			customer_email: customer.email,
			customer_name: customer.name ?? null,
			default_payment_method: null,
			description: null,
			due_date: null,
			effective_at: at,
			ending_balance: 0,
			footer: null,
			hosted_invoice_url: null,
			invoice_pdf: null,
			last_finalization_error: null,
			livemode: false,
			metadata: {},
			next_payment_attempt: null,
			number,
			parent: {
				quote_details: null,
				subscription_details: {
					metadata: { ...subscription.metadata },
					subscription: subscription.id
				},
				type: 'subscription_details'
			},
			period_end: usagePeriod.end,
			period_start: usagePeriod.start,
			receipt_number: null,
			starting_balance: 0,
			statement_descriptor: null,
			status: 'open',
			status_transitions: {
				finalized_at: at,
				marked_uncollectible_at: null,
				paid_at: null,
				voided_at: null
			},
			subtotal: total,
			subtotal_excluding_tax: total,
			test_clock: null,
			total,
			total_excluding_tax: total,
			webhooks_delivered_at: at,
			lines: emptyList(`/v1/invoices/${invoiceId}/lines`, lines)
		});
		subscription.latest_invoice = invoice.id;
		return invoice;
	}

	/** Tries to collect an open invoice with a card on file. */
	private payInvoice(
		invoice: FakeInvoice & ApiObject,
		pm: FakePaymentMethod & ApiObject,
		at: number
	): {
		succeeded: boolean;
		pi: FakePaymentIntent & ApiObject;
		charge: FakeCharge & ApiObject;
		newPi: boolean;
	} {
		const open = this.invoicePayments(invoice.id).find((p) => p.status === 'open');
		let pi = open
			? this.store.get<FakePaymentIntent & ApiObject>(id(open.payment.payment_intent)!)
			: undefined;
		const newPi = !pi;
		pi ??= this.newPaymentIntent({
			amount: invoice.amount_remaining,
			currency: invoice.currency,
			customer: id(invoice.customer),
			description:
				invoice.billing_reason === 'subscription_create'
					? 'Subscription creation'
					: 'Subscription update',
			metadata: {},
			receiptEmail: null,
			at
		});
		const payment =
			open ??
			this.store.put<FakeInvoicePayment & ApiObject>({
				id: this.store.newId('inpay_'),
				object: 'invoice_payment',
				amount_paid: null,
				amount_requested: invoice.amount_remaining,
				created: at,
				currency: invoice.currency,
				invoice: invoice.id,
				is_default: true,
				livemode: false,
				payment: { type: 'payment_intent', payment_intent: pi.id },
				status: 'open',
				status_transitions: { canceled_at: null, paid_at: null }
			});
		const behaviour = this.state.cards[pm.id] ?? 'succeeds';
		const renewal = invoice.billing_reason !== 'subscription_create';
		const decline = behaviour === 'renewals_fail' && renewal ? DECLINED : null;
		const { charge, succeeded } = this.attemptCharge(pi, pm, decline, at);
		invoice.attempt_count += 1;
		invoice.attempted = true;
		if (succeeded) {
			invoice.status = 'paid';
			invoice.amount_paid = invoice.amount_due;
			invoice.amount_remaining = 0;
			invoice.status_transitions.paid_at = at;
			payment.status = 'paid';
			payment.amount_paid = pi.amount;
			payment.status_transitions.paid_at = at;
		}
		return { succeeded, pi, charge, newPi };
	}

	private emitInvoicePayment(
		invoice: FakeInvoice & ApiObject,
		payment: {
			succeeded: boolean;
			pi: FakePaymentIntent & ApiObject;
			charge: FakeCharge & ApiObject;
			newPi: boolean;
		},
		at: number
	) {
		if (payment.newPi) this.emit('payment_intent.created', payment.pi, { at });
		if (payment.succeeded) {
			this.emit('charge.succeeded', payment.charge, { at });
			this.emit('payment_intent.succeeded', payment.pi, { at });
			this.emit('invoice.paid', invoice, { at });
			this.emit('invoice.payment_succeeded', invoice, { at });
		} else {
			this.emit('charge.failed', payment.charge, { at });
			this.emit('payment_intent.payment_failed', payment.pi, { at });
			this.emit('invoice.payment_failed', invoice, { at });
		}
	}

	private periodEnd(subscription: FakeSubscription): number {
		return subscription.items.data[0].current_period_end;
	}

	/** Moves a subscription into its next period and collects the renewal. */
	private renew(subscription: FakeSubscription & ApiObject, at: number) {
		const before = this.render(subscription);
		if (subscription.cancel_at_period_end) {
			subscription.status = 'canceled';
			subscription.ended_at = at;
			this.emit('customer.subscription.deleted', subscription, { at });
			return;
		}
		const first = subscription.items.data[0];
		const usage = { start: first.current_period_start, end: first.current_period_end };
		const recurring = first.price.recurring!;
		let k = 1;
		let next = addInterval(
			subscription.billing_cycle_anchor,
			recurring.interval,
			recurring.interval_count
		);
		while (next <= at) {
			k += 1;
			next = addInterval(
				subscription.billing_cycle_anchor,
				recurring.interval,
				recurring.interval_count * k
			);
		}
		for (const item of subscription.items.data) {
			item.current_period_start = at;
			item.current_period_end = next;
		}
		const customer = this.find<FakeCustomer & ApiObject>('customer', id(subscription.customer)!);
		const invoice = this.newInvoice(subscription, customer, 'subscription_cycle', at, usage);
		const pm = this.store.get<FakePaymentMethod & ApiObject>(
			id(subscription.default_payment_method) ??
				id(customer.invoice_settings.default_payment_method) ??
				''
		);
		if (!pm) {
			invoice.attempted = true;
			subscription.status = 'past_due';
			this.emit('invoice.payment_failed', invoice, { at });
		} else {
			const payment = this.payInvoice(invoice, pm, at);
			subscription.status = payment.succeeded ? 'active' : 'past_due';
			this.emitInvoicePayment(invoice, payment, at);
			if (payment.succeeded && this.state.cards[pm.id] === 'disputed')
				this.dispute(payment.charge, at);
		}
		this.emit('customer.subscription.updated', subscription, {
			at,
			previous: previousAttributes(before, this.render(subscription))
		});
	}

	updateSubscription(
		subId: string,
		params: Params,
		request: RequestInfo = NO_REQUEST
	): FakeSubscription {
		this.tick();
		checkShape(params, {
			cancel_at_period_end: 'scalar',
			metadata: 'map',
			description: 'scalar',
			default_payment_method: 'scalar',
			proration_behavior: 'scalar',
			cancellation_details: { comment: 'scalar', feedback: 'scalar' },
			items: [
				{
					id: 'scalar',
					price: 'scalar',
					quantity: 'scalar',
					metadata: 'map',
					price_data: {
						currency: 'scalar',
						product: 'scalar',
						unit_amount: 'scalar',
						recurring: { interval: 'scalar', interval_count: 'scalar' },
						tax_behavior: 'scalar'
					}
				}
			],
			expand: 'list'
		});
		const subscription = this.find<FakeSubscription & ApiObject>('subscription', subId);
		const before = this.render(subscription);
		const onlyAfterCancel = ['metadata', 'cancellation_details', 'expand'];
		if (
			subscription.status === 'canceled' &&
			Object.keys(params).some((k) => !onlyAfterCancel.includes(k))
		) {
			throw ApiError.invalid(
				'A canceled subscription can only update its cancellation_details and metadata.'
			);
		}
		const proration = text(params, 'proration_behavior');
		if (proration && !['none', 'create_prorations', 'always_invoice'].includes(proration)) {
			throw ApiError.invalid(`Invalid proration_behavior: ${proration}`, 'proration_behavior');
		}
		// Planned changes are checked whole before any is applied.
		const itemParams = list(params, 'items') as Params[];
		if (itemParams.length > 1) {
			throw ApiError.invalid(
				'The local test service changes one subscription item per request.',
				'items'
			);
		}
		let itemChange: { item: FakeSubscriptionItem; price?: FakePrice; quantity?: number } | null =
			null;
		if (itemParams.length) {
			const p = itemParams[0];
			const itemId = text(p, 'id');
			const item = subscription.items.data.find((i) => i.id === itemId);
			if (!itemId || !item) {
				throw ApiError.invalid(
					itemId
						? `No such subscription item on this subscription: '${itemId}'`
						: 'The local test service changes an existing item only: pass items[0][id].',
					'items[0][id]'
				);
			}
			itemChange = { item, quantity: integer(p, 'quantity', 'items[0]', { min: 1, max: 999_999 }) };
			const priceId = text(p, 'price');
			const data = object(p, 'price_data');
			if (priceId && data) {
				throw ApiError.invalid(
					'You may only specify one of these parameters: items[0][price], items[0][price_data].',
					'items[0]'
				);
			}
			if (priceId)
				itemChange.price = this.find<FakePrice & ApiObject>(
					'price',
					priceId,
					'items[0][price]',
					400
				);
			if (data) {
				const pre = 'items[0][price_data]';
				const cur = required(data, 'currency', pre).toLowerCase();
				const productId = required(data, 'product', pre);
				this.find('product', productId, `${pre}[product]`, 400);
				const unitAmount = integer(data, 'unit_amount', pre, { min: 0 });
				if (unitAmount === undefined) {
					throw ApiError.invalid(
						`Missing required param: ${pre}[unit_amount].`,
						`${pre}[unit_amount]`,
						'parameter_missing'
					);
				}
				const rec = object(data, 'recurring');
				if (!rec) {
					throw ApiError.invalid(
						`Missing required param: ${pre}[recurring].`,
						`${pre}[recurring]`,
						'parameter_missing'
					);
				}
				const every = required(rec, 'interval', `${pre}[recurring]`);
				if (!['day', 'week', 'month', 'year'].includes(every)) {
					throw ApiError.invalid(`Invalid interval: ${every}`, `${pre}[recurring][interval]`);
				}
				itemChange.price = this.newPrice(
					productId,
					cur,
					unitAmount,
					{
						interval: every as Stripe.Price.Recurring.Interval,
						interval_count:
							integer(rec, 'interval_count', `${pre}[recurring]`, { min: 1, max: 12 }) ?? 1
					},
					this.now()
				);
			}
			if (itemChange.price) {
				const now = itemChange.price;
				const was = item.price;
				if (now.currency !== subscription.currency) {
					throw ApiError.invalid(
						`The price currency (${now.currency}) must match the subscription currency (${subscription.currency}).`,
						'items[0]'
					);
				}
				if (
					!now.recurring ||
					now.recurring.interval !== was.recurring?.interval ||
					now.recurring.interval_count !== was.recurring?.interval_count
				) {
					throw ApiError.invalid(
						'The local test service changes the amount only; the new price must have the same interval.',
						'items[0]'
					);
				}
			}
		}
		const pmId = text(params, 'default_payment_method');
		if (pmId) {
			const pm = this.find<FakePaymentMethod & ApiObject>(
				'payment_method',
				pmId,
				'default_payment_method',
				400
			);
			if (pm.customer !== id(subscription.customer)) {
				throw ApiError.invalid(
					`The payment method ${pmId} is not attached to this subscription's customer.`,
					'default_payment_method'
				);
			}
		}
		const cancelAtEnd = boolean(params, 'cancel_at_period_end');
		const meta = metadata(params, 'metadata', '', subscription.metadata);

		// Apply.
		const now = this.now();
		if (meta) subscription.metadata = meta;
		const description = text(params, 'description');
		if (description !== undefined) subscription.description = description || null;
		if (pmId) subscription.default_payment_method = pmId;
		const details = object(params, 'cancellation_details');
		if (details) {
			const feedback = text(details, 'feedback');
			subscription.cancellation_details = {
				...subscription.cancellation_details!,
				comment: text(details, 'comment') ?? subscription.cancellation_details?.comment ?? null,
				feedback: (feedback ??
					subscription.cancellation_details?.feedback ??
					null) as Stripe.Subscription.CancellationDetails.Feedback | null
			};
		}
		if (cancelAtEnd === true && !subscription.cancel_at_period_end) {
			subscription.cancel_at_period_end = true;
			subscription.cancel_at = this.periodEnd(subscription);
			subscription.canceled_at = now;
			subscription.cancellation_details = {
				...subscription.cancellation_details!,
				reason: 'cancellation_requested'
			};
		} else if (cancelAtEnd === false && subscription.cancel_at_period_end) {
			subscription.cancel_at_period_end = false;
			subscription.cancel_at = null;
			subscription.canceled_at = null;
			subscription.cancellation_details = { ...subscription.cancellation_details!, reason: null };
		}
		if (itemChange) {
			// The new amount is charged from the next renewal; no prorations are computed.
			if (itemChange.price) {
				itemChange.item.price = structuredClone(itemChange.price);
				itemChange.item.plan = this.planOf(itemChange.price);
			}
			if (itemChange.quantity !== undefined) itemChange.item.quantity = itemChange.quantity;
			const itemMeta = metadata(itemParams[0], 'metadata', 'items[0]', itemChange.item.metadata);
			if (itemMeta) itemChange.item.metadata = itemMeta;
		}
		const previous = previousAttributes(before, this.render(subscription));
		if (Object.keys(previous).length) {
			this.emit('customer.subscription.updated', subscription, { previous, request });
		}
		this.store.save();
		return this.render(subscription);
	}

	cancelSubscriptionNow(
		subId: string,
		params: Params,
		request: RequestInfo = NO_REQUEST
	): FakeSubscription {
		this.tick();
		checkShape(params, {
			cancellation_details: { comment: 'scalar', feedback: 'scalar' },
			invoice_now: 'scalar',
			prorate: 'scalar',
			expand: 'list'
		});
		const subscription = this.find<FakeSubscription & ApiObject>('subscription', subId);
		if (subscription.status === 'canceled') {
			throw ApiError.invalid(`The subscription ${subId} has already been canceled.`);
		}
		this.endSubscription(subscription, this.now(), request, object(params, 'cancellation_details'));
		this.store.save();
		return this.render(subscription);
	}

	private endSubscription(
		subscription: FakeSubscription & ApiObject,
		at: number,
		request: RequestInfo,
		details?: Params
	) {
		subscription.status = 'canceled';
		subscription.canceled_at = at;
		subscription.ended_at = at;
		subscription.cancellation_details = {
			comment: details
				? (text(details, 'comment') ?? null)
				: (subscription.cancellation_details?.comment ?? null),
			feedback: (details
				? (text(details, 'feedback') ?? null)
				: (subscription.cancellation_details?.feedback ??
					null)) as Stripe.Subscription.CancellationDetails.Feedback | null,
			feedback_option: null,
			reason: 'cancellation_requested'
		};
		this.emit('customer.subscription.deleted', subscription, { at, request });
	}

	// --- billing portal --------------------------------------------------------------------------------

	createPortalSession(params: Params, request: RequestInfo = NO_REQUEST): FakePortalSession {
		void request;
		checkShape(params, {
			customer: 'scalar',
			return_url: 'scalar',
			locale: 'scalar',
			configuration: 'scalar',
			expand: 'list'
		});
		const customerId = required(params, 'customer');
		this.find('customer', customerId, 'customer', 400);
		const returnUrl = text(params, 'return_url') ?? null;
		if (returnUrl !== null && !/^https?:\/\/\S+$/.test(returnUrl)) {
			throw ApiError.invalid('Not a valid URL', 'return_url', 'url_invalid');
		}
		const portal = this.store.put<FakePortalSession & ApiObject>({
			id: this.store.newId('bps_'),
			object: 'billing_portal.session',
			configuration: PORTAL_CONFIGURATION,
			created: this.now(),
			customer: customerId,
			customer_account: null,
			flow: null,
			livemode: false,
			locale: null,
			on_behalf_of: null,
			return_url: returnUrl,
			url: ''
		});
		this.store.save();
		return this.render(portal);
	}

	private portal(portalSessionId: string): FakePortalSession & ApiObject {
		const portal = this.store.get<FakePortalSession & ApiObject>(portalSessionId);
		if (!portal || portal.object !== 'billing_portal.session') {
			throw new Error('This billing page does not exist.');
		}
		return portal;
	}

	/** The customer's subscription by id, or their only running one when no id is given. */
	private portalSubscription(portalSessionId: string, subId: string | undefined) {
		const portal = this.portal(portalSessionId);
		if (!subId) {
			const running = this.store
				.all<FakeSubscription & ApiObject>('subscription')
				.filter((s) => s.customer === portal.customer && s.status !== 'canceled');
			if (running.length !== 1) {
				throw new Error(
					running.length
						? 'Choose which monthly gift to change.'
						: 'There is no monthly gift to change.'
				);
			}
			return running[0];
		}
		const subscription = this.store.get<FakeSubscription & ApiObject>(subId);
		if (
			!subscription ||
			subscription.object !== 'subscription' ||
			subscription.customer !== portal.customer
		) {
			throw new Error('This monthly gift is not one of yours.');
		}
		return subscription;
	}

	/** A new card from the billing page; open renewals are collected with it at once. */
	updateCard(portalSessionId: string, input: CardInput): Result {
		this.tick();
		const portal = this.portal(portalSessionId);
		const customer = this.find<FakeCustomer & ApiObject>('customer', portal.customer);
		const at = this.now();
		const digits = input.cardNumber.replace(/[\s-]/g, '');
		const judgement = judgeCard(digits, 'attach');
		if (judgement.kind !== 'accept') return { ok: false, message: judgement.message };
		const expiry = checkExpiry(input.expiry, at);
		if (typeof expiry === 'string') return { ok: false, message: expiry };
		if (input.cvc !== undefined && !/^\d{3,4}$/.test(input.cvc.trim())) {
			return { ok: false, message: "Your card's security code is incomplete." };
		}
		const before = this.render(customer);
		const pm = this.newPaymentMethod(
			digits,
			expiry,
			{ email: customer.email ?? '', name: input.name?.trim() || customer.name || null },
			judgement.behaviour,
			customer.id,
			at
		);
		customer.invoice_settings.default_payment_method = pm.id;
		this.emit('payment_method.attached', pm, { at });
		this.emit('customer.updated', customer, {
			at,
			previous: previousAttributes(before, this.render(customer))
		});
		const subscriptions = this.store
			.all<FakeSubscription & ApiObject>('subscription')
			.filter((s) => s.customer === customer.id && s.status !== 'canceled');
		for (const subscription of subscriptions) {
			const subBefore = this.render(subscription);
			subscription.default_payment_method = pm.id;
			const open = this.store
				.all<FakeInvoice & ApiObject>('invoice')
				.filter(
					(i) =>
						id(i.parent?.subscription_details?.subscription) === subscription.id &&
						i.status === 'open'
				)
				.reverse();
			for (const invoice of open) {
				const payment = this.payInvoice(invoice, pm, at);
				this.emitInvoicePayment(invoice, payment, at);
				if (payment.succeeded && judgement.behaviour === 'disputed')
					this.dispute(payment.charge, at);
			}
			const stillOpen = open.some((i) => i.status === 'open');
			if (subscription.status === 'past_due' && !stillOpen) subscription.status = 'active';
			const previous = previousAttributes(subBefore, this.render(subscription));
			if (Object.keys(previous).length) {
				this.emit('customer.subscription.updated', subscription, { at, previous });
			}
		}
		this.store.save();
		return { ok: true };
	}

	/** Ends a monthly gift from the billing page: at the end of the paid period, or now. */
	cancelFromPortal(
		portalSessionId: string,
		subId: string | undefined,
		when: 'period_end' | 'now' = 'period_end'
	): Result {
		this.tick();
		const subscription = this.portalSubscription(portalSessionId, subId);
		if (subscription.status === 'canceled')
			return { ok: false, message: 'This monthly gift has already ended.' };
		if (when === 'now') {
			this.endSubscription(subscription, this.now(), NO_REQUEST);
		} else {
			this.updateSubscription(subscription.id, { cancel_at_period_end: 'true' });
		}
		this.store.save();
		return { ok: true };
	}

	/** Takes back a cancellation at the period end. */
	keepFromPortal(portalSessionId: string, subId?: string): Result {
		this.tick();
		const subscription = this.portalSubscription(portalSessionId, subId);
		if (subscription.status === 'canceled')
			return { ok: false, message: 'This monthly gift has already ended.' };
		this.updateSubscription(subscription.id, { cancel_at_period_end: 'false' });
		return { ok: true };
	}

	// --- refunds and disputes --------------------------------------------------------------------------

	createRefund(params: Params, request: RequestInfo = NO_REQUEST): FakeRefund {
		this.tick();
		checkShape(params, {
			charge: 'scalar',
			payment_intent: 'scalar',
			amount: 'scalar',
			reason: 'scalar',
			metadata: 'map',
			expand: 'list'
		});
		const chargeParam = text(params, 'charge');
		const intentParam = text(params, 'payment_intent');
		if (!chargeParam && !intentParam) {
			throw ApiError.invalid(
				'One of the following params should be provided for this request: payment_intent or charge.'
			);
		}
		if (chargeParam && intentParam) {
			throw ApiError.invalid(
				'You may only specify one of these parameters: charge, payment_intent.'
			);
		}
		let charge: FakeCharge & ApiObject;
		if (chargeParam) charge = this.find('charge', chargeParam, 'charge', 400);
		else {
			const pi = this.find<FakePaymentIntent & ApiObject>(
				'payment_intent',
				intentParam!,
				'payment_intent',
				400
			);
			if (pi.status !== 'succeeded' || !pi.latest_charge) {
				throw ApiError.invalid(
					`This PaymentIntent (${pi.id}) does not have a successful charge to refund.`,
					'payment_intent'
				);
			}
			charge = this.find('charge', id(pi.latest_charge)!);
		}
		const reason = text(params, 'reason');
		if (reason && !['duplicate', 'fraudulent', 'requested_by_customer'].includes(reason)) {
			throw ApiError.invalid(`Invalid reason: ${reason}`, 'reason');
		}
		const amount = integer(params, 'amount', '', { min: 1 });
		const refund = this.refundCharge(charge, amount, {
			reason: (reason ?? null) as Stripe.Refund.Reason | null,
			metadata: metadata(params) ?? {},
			request
		});
		this.store.save();
		return refund;
	}

	private refundCharge(
		charge: FakeCharge & ApiObject,
		amount: number | undefined,
		options: {
			reason: Stripe.Refund.Reason | null;
			metadata: Record<string, string>;
			request: RequestInfo;
		}
	): FakeRefund {
		if (charge.status !== 'succeeded') {
			throw ApiError.invalid(
				`Charge ${charge.id} did not succeed; there is nothing to refund.`,
				'charge'
			);
		}
		if (charge.disputed) {
			throw ApiError.invalid(
				`Charge ${charge.id} has been charged back; cannot issue a refund.`,
				'charge',
				'charge_disputed'
			);
		}
		const remaining = charge.amount - charge.amount_refunded;
		if (remaining <= 0) {
			throw ApiError.invalid(
				`Charge ${charge.id} has already been refunded.`,
				'charge',
				'charge_already_refunded'
			);
		}
		const value = amount ?? remaining;
		if (value > remaining) {
			throw ApiError.invalid(
				`Refund amount (${money(value, charge.currency)}) is greater than unrefunded amount on charge (${money(remaining, charge.currency)})`,
				'amount',
				'amount_too_large'
			);
		}
		const at = this.now();
		const refundId = this.store.newId('re_');
		const txn = this.newTransaction({
			amount: -value,
			fee: 0,
			currency: charge.currency,
			type: 'refund',
			reportingCategory: 'refund',
			source: refundId,
			description: 'REFUND FOR CHARGE',
			at
		});
		const refund = this.store.put<FakeRefund & ApiObject>({
			id: refundId,
			object: 'refund',
			amount: value,
			balance_transaction: txn.id,
			charge: charge.id,
			created: at,
			currency: charge.currency,
			customer: id(charge.customer),
			customer_account: null,
			metadata: options.metadata,
			payment_intent: id(charge.payment_intent),
			payment_method: id(charge.payment_method),
			reason: options.reason,
			receipt_number: null,
			source_transfer_reversal: null,
			status: 'succeeded',
			transfer_reversal: null
		});
		const before = this.render(charge);
		charge.amount_refunded += value;
		charge.refunded = charge.amount_refunded === charge.amount;
		this.emit('refund.created', refund, { at, request: options.request });
		this.emit('charge.refunded', charge, {
			at,
			request: options.request,
			previous: previousAttributes(before, this.render(charge))
		});
		return this.render(refund);
	}

	refund(chargeId: string, amount?: number): Result<{ refund: FakeRefund }> {
		try {
			const charge = this.find<FakeCharge & ApiObject>('charge', chargeId, 'charge');
			if (amount !== undefined && (!Number.isInteger(amount) || amount < 1)) {
				return {
					ok: false,
					message: 'The refund amount must be a whole number of cents, at least 1.'
				};
			}
			const refund = this.refundCharge(charge, amount, {
				reason: null,
				metadata: {},
				request: NO_REQUEST
			});
			this.store.save();
			return { ok: true, refund };
		} catch (error) {
			return failure(error);
		}
	}

	private dispute(charge: FakeCharge & ApiObject, at: number): FakeDispute & ApiObject {
		const dispute = this.store.put<FakeDispute & ApiObject>({
			id: this.store.newId('dp_'),
			object: 'dispute',
			amount: charge.amount - charge.amount_refunded,
			balance_transactions: [],
			charge: charge.id,
			created: at,
			currency: charge.currency,
			enhanced_eligibility_types: [],
			evidence_details: {
				due_by: at + 7 * DAY,
				enhanced_eligibility: {},
				has_evidence: false,
				past_due: false,
				submission_count: 0,
				submission_method: 'not_submitted'
			},
			is_charge_refundable: false,
			livemode: false,
			metadata: {},
			payment_intent: id(charge.payment_intent),
			reason: 'fraudulent',
			status: 'needs_response'
		});
		charge.disputed = true;
		this.emit('charge.dispute.created', dispute, { at });
		return dispute;
	}

	openDispute(chargeId: string): Result<{ dispute: FakeDispute }> {
		this.tick();
		const charge = this.store.get<FakeCharge & ApiObject>(chargeId);
		if (!charge || charge.object !== 'charge')
			return { ok: false, message: `No such charge: '${chargeId}'` };
		if (charge.status !== 'succeeded')
			return { ok: false, message: 'Only a successful charge can be disputed.' };
		if (charge.disputed) return { ok: false, message: 'This charge is already disputed.' };
		if (charge.amount_refunded >= charge.amount) {
			return { ok: false, message: 'This charge has been refunded in full.' };
		}
		const dispute = this.dispute(charge, this.now());
		this.store.save();
		return { ok: true, dispute: this.render(dispute) };
	}

	/**
	 * Closes a dispute. Lost: the amount and the dispute fee leave the balance (one negative
	 * balance transaction). Won: nothing moves. (The real service withdraws the amount when the
	 * dispute opens and returns it when it is won; the totals after closing are the same for a loss.)
	 */
	closeDispute(disputeId: string, outcome: 'won' | 'lost'): Result<{ dispute: FakeDispute }> {
		this.tick();
		const dispute = this.store.get<FakeDispute & ApiObject>(disputeId);
		if (!dispute || dispute.object !== 'dispute')
			return { ok: false, message: `No such dispute: '${disputeId}'` };
		if (outcome !== 'won' && outcome !== 'lost')
			return { ok: false, message: 'The outcome must be won or lost.' };
		if (dispute.status === 'won' || dispute.status === 'lost') {
			return { ok: false, message: `This dispute is already closed (${dispute.status}).` };
		}
		const at = this.now();
		const before = this.render(dispute);
		dispute.status = outcome;
		if (outcome === 'lost') {
			const txn = this.newTransaction({
				amount: -dispute.amount,
				fee: DISPUTE_FEE,
				currency: dispute.currency,
				type: 'adjustment',
				reportingCategory: 'dispute',
				source: dispute.id,
				description: `Chargeback withdrawal for ${id(dispute.charge)}`,
				feeDescription: 'Dispute fee',
				at
			});
			dispute.balance_transactions = [this.render(txn)];
		}
		this.emit('charge.dispute.closed', dispute, {
			at,
			previous: previousAttributes(before, this.render(dispute))
		});
		this.store.save();
		return { ok: true, dispute: this.render(dispute) };
	}

	// --- balance and payouts ----------------------------------------------------------------------

	private availableTransactions(currency: string): (FakeBalanceTransaction & ApiObject)[] {
		const now = this.now();
		return this.store
			.all<FakeBalanceTransaction & ApiObject>('balance_transaction')
			.filter((t) => t.currency === currency && t.available_on <= now);
	}

	/** The balance that can be paid out now, in cents. */
	availableBalance(currency = DEFAULT_CURRENCY): number {
		return this.availableTransactions(currency).reduce((sum, t) => sum + t.net, 0);
	}

	balance(): FakeBalance {
		this.tick();
		const now = this.now();
		const totals = new Map<string, { available: number; pending: number }>();
		totals.set(DEFAULT_CURRENCY, { available: 0, pending: 0 });
		for (const t of this.store.all<FakeBalanceTransaction & ApiObject>('balance_transaction')) {
			const total = totals.get(t.currency) ?? { available: 0, pending: 0 };
			if (t.available_on <= now) total.available += t.net;
			else total.pending += t.net;
			totals.set(t.currency, total);
		}
		const entries = [...totals.entries()];
		return {
			object: 'balance',
			available: entries.map(([currency, t]) => ({
				amount: t.available,
				currency,
				source_types: { card: t.available }
			})),
			pending: entries.map(([currency, t]) => ({
				amount: t.pending,
				currency,
				source_types: { card: t.pending }
			})),
			livemode: false
		};
	}

	private newPayout(
		amount: number,
		currency: string,
		automatic: boolean,
		at: number,
		arrivalDays: number,
		fields: {
			description?: string | null;
			metadata?: Record<string, string>;
			statementDescriptor?: string | null;
		} = {}
	): FakePayout & ApiObject {
		const payoutId = this.store.newId('po_');
		const txn = this.newTransaction({
			amount: -amount,
			fee: 0,
			currency,
			type: 'payout',
			reportingCategory: 'payout',
			source: payoutId,
			description: 'STRIPE PAYOUT',
			at
		});
		return this.store.put<FakePayout & ApiObject>({
			id: payoutId,
			object: 'payout',
			amount,
			application_fee: null,
			application_fee_amount: null,
			arrival_date: at + arrivalDays * DAY,
			automatic,
			balance_transaction: txn.id,
			created: at,
			currency,
			description: fields.description ?? (automatic ? 'STRIPE PAYOUT' : null),
			destination: PAYOUT_DESTINATION,
			failure_balance_transaction: null,
			failure_code: null,
			failure_message: null,
			livemode: false,
			metadata: fields.metadata ?? {},
			method: 'standard',
			original_payout: null,
			reconciliation_status: automatic ? 'in_progress' : 'not_applicable',
			reversed_by: null,
			source_type: 'card',
			statement_descriptor: fields.statementDescriptor ?? null,
			status: 'pending',
			trace_id: null,
			type: 'bank_account'
		});
	}

	/**
	 * The automatic payout: every available balance transaction not yet in a payout goes into one
	 * payout of their total net. It arrives (payout.paid, or payout.failed after failNextPayout)
	 * `arrivalDays` later on the fake clock; 0 settles it at once.
	 */
	createPayout(
		options: { currency?: string; arrivalDays?: number } = {}
	): Result<{ payout: FakePayout }> {
		this.tick();
		const currency = options.currency ?? DEFAULT_CURRENCY;
		const arrivalDays = options.arrivalDays ?? 1;
		if (!Number.isInteger(arrivalDays) || arrivalDays < 0 || arrivalDays > 30) {
			return { ok: false, message: 'The arrival must be 0 to 30 days away.' };
		}
		const contents = this.availableTransactions(currency).filter((t) => !this.state.sweptBy[t.id]);
		const amount = contents.reduce((sum, t) => sum + t.net, 0);
		if (amount !== this.availableBalance(currency)) {
			throw new Error(
				'Fake payment service: the unswept transactions do not add up to the balance.'
			);
		}
		if (amount <= 0) return { ok: false, message: 'There is no available balance to pay out.' };
		const at = this.now();
		const payout = this.newPayout(amount, currency, true, at, arrivalDays);
		const ids = [...contents.map((t) => t.id), payout.balance_transaction as string];
		this.state.payoutContents[payout.id] = ids;
		for (const txnId of ids) this.state.sweptBy[txnId] = payout.id;
		this.emit('payout.created', payout, { at });
		this.tick();
		this.store.save();
		return { ok: true, payout: this.render(payout) };
	}

	/** A payout asked for through the API (`automatic: false`), as the real service allows. */
	createManualPayout(params: Params, request: RequestInfo = NO_REQUEST): FakePayout {
		this.tick();
		checkShape(params, {
			amount: 'scalar',
			currency: 'scalar',
			description: 'scalar',
			metadata: 'map',
			statement_descriptor: 'scalar',
			method: 'scalar',
			expand: 'list'
		});
		const amount = integer(params, 'amount', '', { min: 1 });
		if (amount === undefined)
			throw ApiError.invalid('Missing required param: amount.', 'amount', 'parameter_missing');
		const currency = required(params, 'currency').toLowerCase();
		const method = text(params, 'method') ?? 'standard';
		if (method !== 'standard') {
			throw ApiError.invalid('The local test service makes standard payouts only.', 'method');
		}
		const available = this.availableBalance(currency);
		if (amount > available) {
			throw ApiError.invalid(
				`You have insufficient funds in your Stripe account for this transfer. Your card balance is too low. You can use the /v1/balance endpoint to view your Stripe balance (available: ${money(available, currency)}).`,
				'amount',
				'balance_insufficient'
			);
		}
		const at = this.now();
		const payout = this.newPayout(amount, currency, false, at, 1, {
			description: text(params, 'description') ?? null,
			metadata: metadata(params) ?? {},
			statementDescriptor: text(params, 'statement_descriptor') ?? null
		});
		this.emit('payout.created', payout, { at, request });
		this.store.save();
		return this.render(payout);
	}

	/** The balance transactions in an automatic payout (what `?payout=` lists). */
	payoutTransactions(payoutId: string): (FakeBalanceTransaction & ApiObject)[] {
		const payout = this.find<FakePayout & ApiObject>('payout', payoutId, 'payout');
		if (!payout.automatic) {
			throw ApiError.invalid(
				'Balance transaction history can only be filtered on automatic transfers, not manual.',
				'payout'
			);
		}
		const ids = new Set(this.state.payoutContents[payoutId] ?? []);
		return this.store
			.all<FakeBalanceTransaction & ApiObject>('balance_transaction')
			.filter((t) => ids.has(t.id));
	}

	failNextPayout(): void {
		this.state.failNextPayout = true;
		this.store.save();
	}

	private arrive(payout: FakePayout & ApiObject, at: number) {
		const before = this.render(payout);
		if (this.state.failNextPayout) {
			this.state.failNextPayout = false;
			const txn = this.newTransaction({
				amount: payout.amount,
				fee: 0,
				currency: payout.currency,
				type: 'payout_failure',
				reportingCategory: 'payout_reversal',
				source: payout.id,
				description: 'Payout failure',
				at
			});
			payout.status = 'failed';
			payout.failure_code = 'account_closed';
			payout.failure_message = 'The bank account has been closed.';
			payout.failure_balance_transaction = txn.id;
			if (payout.automatic) payout.reconciliation_status = 'completed';
			this.emit('payout.failed', payout, {
				at,
				previous: previousAttributes(before, this.render(payout))
			});
			return;
		}
		payout.status = 'paid';
		if (payout.automatic) payout.reconciliation_status = 'completed';
		this.emit('payout.paid', payout, {
			at,
			previous: previousAttributes(before, this.render(payout))
		});
	}

	// --- the clock ------------------------------------------------------------------------------------

	/**
	 * Everything due by the fake clock, earliest first: sessions expire, subscriptions renew (or end
	 * at the period end), payouts arrive.
	 */
	tick(): void {
		let changed = false;
		for (let guard = 0; guard < 10_000; guard++) {
			const now = this.now();
			let next: { at: number; run: () => void } | null = null;
			const consider = (at: number, run: () => void) => {
				if (at <= now && (!next || at < next.at)) next = { at, run };
			};
			for (const s of this.store.all<FakeSession & ApiObject>('checkout.session')) {
				if (s.status === 'open') consider(s.expires_at, () => this.expire(s, s.expires_at));
			}
			for (const s of this.store.all<FakeSubscription & ApiObject>('subscription')) {
				if (s.status === 'active' || s.status === 'past_due') {
					const end = this.periodEnd(s);
					consider(end, () => this.renew(s, end));
				}
			}
			for (const p of this.store.all<FakePayout & ApiObject>('payout')) {
				if (p.status === 'pending') consider(p.arrival_date, () => this.arrive(p, p.arrival_date));
			}
			const due = next as { at: number; run: () => void } | null;
			if (!due) break;
			due.run();
			changed = true;
		}
		if (changed) this.store.save();
	}

	advanceClock(days: number): Result<{ now: number }> {
		if (!Number.isFinite(days) || days <= 0 || days > 3660) {
			return { ok: false, message: 'Advance the clock by more than 0 and at most 3660 days.' };
		}
		this.state.clockOffsetSeconds += Math.round(days * DAY);
		this.store.save();
		this.tick();
		return { ok: true, now: this.now() };
	}

	// --- views for the fake pages and staff controls ---------------------------------------------------

	checkoutView(sessionId: string): CheckoutView | null {
		this.tick();
		const session = this.store.get<FakeSession & ApiObject>(sessionId);
		if (!session || session.object !== 'checkout.session') return null;
		const customer = session.customer
			? this.store.get<FakeCustomer & ApiObject>(session.customer as string)
			: undefined;
		return {
			id: session.id,
			status: (session.status ?? 'open') as CheckoutView['status'],
			mode: session.mode === 'subscription' ? 'subscription' : 'payment',
			lineItems: this.sessionLineItems(session.id).data.map((li) => ({
				name: li.description ?? '',
				description:
					this.store.get<FakeProduct & ApiObject>(li.price.product as string)?.description ?? null,
				quantity: li.quantity ?? 1,
				unitAmount: li.price.unit_amount ?? 0,
				amount: li.amount_total,
				interval: li.price.recurring?.interval ?? null,
				intervalCount: li.price.recurring?.interval_count ?? 1
			})),
			amountTotal: session.amount_total ?? 0,
			currency: session.currency ?? DEFAULT_CURRENCY,
			email: session.customer_email ?? customer?.email ?? null,
			cancelUrl: session.cancel_url,
			expiresAt: session.expires_at
		};
	}

	portalView(portalSessionId: string): PortalView | null {
		this.tick();
		const portal = this.store.get<FakePortalSession & ApiObject>(portalSessionId);
		if (!portal || portal.object !== 'billing_portal.session') return null;
		const customer = this.find<FakeCustomer & ApiObject>('customer', portal.customer);
		const pm = this.store.get<FakePaymentMethod & ApiObject>(
			id(customer.invoice_settings.default_payment_method) ?? ''
		);
		return {
			id: portal.id,
			email: customer.email,
			returnUrl: portal.return_url,
			card: pm
				? {
						brand: pm.card.brand ?? 'card',
						last4: pm.card.last4 ?? '',
						expMonth: pm.card.exp_month,
						expYear: pm.card.exp_year
					}
				: null,
			subscriptions: this.store
				.all<FakeSubscription & ApiObject>('subscription')
				.filter((s) => s.customer === customer.id)
				.map((s) => {
					const item = s.items.data[0];
					const name =
						this.store.get<FakeProduct & ApiObject>(item.price.product as string)?.name ?? 'Gift';
					return {
						id: s.id,
						name,
						status: s.status,
						amount: (item.price.unit_amount ?? 0) * (item.quantity ?? 1),
						currency: s.currency,
						interval: item.price.recurring?.interval ?? 'month',
						currentPeriodEnd: item.current_period_end,
						cancelAtPeriodEnd: s.cancel_at_period_end,
						endedAt: s.ended_at
					};
				})
		};
	}

	listEvents(limit = 100): EventView[] {
		return this.store
			.all<FakeEvent & ApiObject>('event')
			.slice(0, limit)
			.map((e) => {
				const delivery = this.state.deliveries[e.id];
				return {
					id: e.id,
					type: e.type,
					created: e.created,
					objectId: e.data.object.id,
					delivery: delivery
						? {
								status: delivery.status,
								attempts: delivery.attempts,
								lastStatus: delivery.lastStatus ?? null,
								lastError: delivery.lastError ?? null,
								deliveredAt: delivery.deliveredAt ?? null
							}
						: null
				};
			});
	}
}

export interface CheckoutView {
	id: string;
	status: 'open' | 'complete' | 'expired';
	mode: 'payment' | 'subscription';
	lineItems: {
		name: string;
		description: string | null;
		quantity: number;
		unitAmount: number;
		amount: number;
		interval: string | null;
		intervalCount: number;
	}[];
	amountTotal: number;
	currency: string;
	/** Set when the session already knows who pays; otherwise the page asks. */
	email: string | null;
	cancelUrl: string | null;
	expiresAt: number;
}

export interface PortalView {
	id: string;
	email: string | null;
	returnUrl: string | null;
	card: { brand: string; last4: string; expMonth: number; expYear: number } | null;
	subscriptions: {
		id: string;
		name: string;
		status: string;
		amount: number;
		currency: string;
		interval: string;
		currentPeriodEnd: number;
		cancelAtPeriodEnd: boolean;
		endedAt: number | null;
	}[];
}

export interface EventView {
	id: string;
	type: string;
	created: number;
	objectId: string;
	delivery: {
		status: 'pending' | 'delivered' | 'failed';
		attempts: number;
		lastStatus: number | null;
		lastError: string | null;
		deliveredAt: number | null;
	} | null;
}

function failure(error: unknown): { ok: false; message: string } {
	if (error instanceof ApiError || error instanceof Error)
		return { ok: false, message: error.message };
	return { ok: false, message: String(error) };
}

// ------------------------------------------------------------------------------------------------
// The functions the fake pages and staff controls call. They act on the running fake (index.ts,
// startFakeStripe) and answer `{ ok: false, message }` rather than throwing on bad input.

function engine(): FakeEngine {
	return activeFake().engine;
}

function guarded<T extends object>(run: () => Result<T>): Result<T> {
	try {
		return run();
	} catch (error) {
		return failure(error);
	}
}

/** Pays a checkout session with a test card; on success the URL to send the browser to. */
export function payCheckoutSession(sessionId: string, card: CardInput): PayResult {
	return guarded(() => engine().payCheckoutSession(sessionId, card)) as PayResult;
}

export function checkoutView(sessionId: string): CheckoutView | null {
	return engine().checkoutView(sessionId);
}

export function portalView(portalSessionId: string): PortalView | null {
	return engine().portalView(portalSessionId);
}

/** Billing page: a new card for the customer (open renewals are collected with it). */
export function updateCard(portalSessionId: string, card: CardInput | string): Result {
	const input = typeof card === 'string' ? { cardNumber: card } : card;
	return guarded(() => engine().updateCard(portalSessionId, input));
}

/**
 * Billing page: ends a monthly gift at the end of the paid period (default) or now. Without a
 * subscription id, the customer's only running subscription.
 */
export function cancelSubscription(
	portalSessionId: string,
	subscriptionId?: string,
	when: 'period_end' | 'now' = 'period_end'
): Result {
	return guarded(() => engine().cancelFromPortal(portalSessionId, subscriptionId, when));
}

/** Billing page: takes back a cancellation at the period end. */
export function keepSubscription(portalSessionId: string, subscriptionId?: string): Result {
	return guarded(() => engine().keepFromPortal(portalSessionId, subscriptionId));
}

/** Moves the fake clock forward; renewals, expiries and payout arrivals due by then happen. */
export function advanceClock(days: number): Result<{ now: number }> {
	return guarded(() => engine().advanceClock(days));
}

/** The fake clock, unix seconds. */
export function fakeNow(): number {
	return engine().now();
}

export function refund(chargeId: string, amount?: number): Result<{ refund: FakeRefund }> {
	return guarded(() => engine().refund(chargeId, amount));
}

export function openDispute(chargeId: string): Result<{ dispute: FakeDispute }> {
	return guarded(() => engine().openDispute(chargeId));
}

export function closeDispute(
	disputeId: string,
	outcome: 'won' | 'lost'
): Result<{ dispute: FakeDispute }> {
	return guarded(() => engine().closeDispute(disputeId, outcome));
}

/** Sweeps the available balance into one automatic payout (see FakeEngine.createPayout). */
export function createPayout(
	options: { currency?: string; arrivalDays?: number } = {}
): Result<{ payout: FakePayout }> {
	return guarded(() => engine().createPayout(options));
}

/** The next payout to arrive fails (payout.failed; the amount returns to the balance). */
export function failNextPayout(): void {
	engine().failNextPayout();
}

/** The balance that can be paid out now, in cents. */
export function availableBalance(currency = DEFAULT_CURRENCY): number {
	engine().tick();
	return engine().availableBalance(currency);
}

/** Events newest first, with how their delivery went. */
export function listEvents(limit = 100): EventView[] {
	return engine().listEvents(limit);
}

/** Sends an event to the webhook endpoint again. */
export function redeliver(eventId: string): Result {
	return guarded(() => {
		activeFake().webhooks.redeliver(eventId);
		return { ok: true };
	});
}
