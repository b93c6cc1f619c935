// The API objects the fake returns. Each type picks its fields from the `stripe` SDK's own type of
// the same object (for the API version the SDK pins), so a field the fake fills in has the name
// and type the real API gives it; fields the fake does not model are left out rather than made up.
import type Stripe from 'stripe';

type Fake<T, K extends keyof T, Override = object> = Omit<Pick<T, K>, keyof Override> & Override;

export interface FakeList<T> {
	object: 'list';
	data: T[];
	has_more: boolean;
	url: string;
}

export type FakeCustomer = Pick<
	Stripe.Customer,
	| 'id'
	| 'object'
	| 'address'
	| 'balance'
	| 'created'
	| 'currency'
	| 'default_source'
	| 'delinquent'
	| 'description'
	| 'email'
	| 'invoice_prefix'
	| 'invoice_settings'
	| 'livemode'
	| 'metadata'
	| 'name'
	| 'next_invoice_sequence'
	| 'phone'
	| 'preferred_locales'
	| 'shipping'
	| 'tax_exempt'
>;

export type FakeProduct = Pick<
	Stripe.Product,
	| 'id'
	| 'object'
	| 'active'
	| 'created'
	| 'description'
	| 'images'
	| 'livemode'
	| 'marketing_features'
	| 'metadata'
	| 'name'
	| 'package_dimensions'
	| 'shippable'
	| 'tax_details'
	| 'type'
	| 'updated'
	| 'url'
>;

export type FakePrice = Fake<
	Stripe.Price,
	| 'id'
	| 'object'
	| 'active'
	| 'billing_scheme'
	| 'created'
	| 'currency'
	| 'custom_unit_amount'
	| 'livemode'
	| 'lookup_key'
	| 'metadata'
	| 'nickname'
	| 'product'
	| 'recurring'
	| 'tax_behavior'
	| 'tiers_mode'
	| 'transform_quantity'
	| 'type'
	| 'unit_amount',
	{ unit_amount_decimal: string }
>;

export type FakePlan = Fake<
	Stripe.Plan,
	| 'id'
	| 'object'
	| 'active'
	| 'amount'
	| 'billing_scheme'
	| 'created'
	| 'currency'
	| 'interval'
	| 'interval_count'
	| 'livemode'
	| 'metadata'
	| 'meter'
	| 'nickname'
	| 'product'
	| 'tiers_mode'
	| 'transform_usage'
	| 'trial_period_days'
	| 'usage_type',
	{ amount_decimal: string }
>;

export type FakeLineItem = Fake<
	Stripe.LineItem,
	| 'id'
	| 'object'
	| 'adjustable_quantity'
	| 'amount_discount'
	| 'amount_subtotal'
	| 'amount_tax'
	| 'amount_total'
	| 'currency'
	| 'description'
	| 'metadata'
	| 'quantity',
	{ price: FakePrice }
>;

type CardDetails = Pick<
	Stripe.Charge.PaymentMethodDetails.Card,
	'brand' | 'country' | 'exp_month' | 'exp_year' | 'fingerprint' | 'funding' | 'last4'
>;

export type FakePaymentMethod = Fake<
	Stripe.PaymentMethod,
	'id' | 'object' | 'billing_details' | 'created' | 'customer' | 'livemode' | 'metadata' | 'type',
	{ card: CardDetails }
>;

export type FakeSession = Pick<
	Stripe.Checkout.Session,
	| 'id'
	| 'object'
	| 'after_expiration'
	| 'allow_promotion_codes'
	| 'amount_subtotal'
	| 'amount_total'
	| 'billing_address_collection'
	| 'cancel_url'
	| 'client_reference_id'
	| 'client_secret'
	| 'consent'
	| 'consent_collection'
	| 'created'
	| 'currency'
	| 'custom_fields'
	| 'customer'
	| 'customer_creation'
	| 'customer_details'
	| 'customer_email'
	| 'expires_at'
	| 'invoice'
	| 'livemode'
	| 'locale'
	| 'metadata'
	| 'mode'
	| 'payment_intent'
	| 'payment_link'
	| 'payment_method_collection'
	| 'payment_method_types'
	| 'payment_status'
	| 'recovered_from'
	| 'setup_intent'
	| 'shipping_address_collection'
	| 'shipping_cost'
	| 'shipping_options'
	| 'status'
	| 'submit_type'
	| 'subscription'
	| 'success_url'
	| 'total_details'
	| 'ui_mode'
	| 'url'
>;

export type FakePaymentIntent = Pick<
	Stripe.PaymentIntent,
	| 'id'
	| 'object'
	| 'amount'
	| 'amount_capturable'
	| 'amount_received'
	| 'application'
	| 'application_fee_amount'
	| 'canceled_at'
	| 'cancellation_reason'
	| 'capture_method'
	| 'client_secret'
	| 'confirmation_method'
	| 'created'
	| 'currency'
	| 'customer'
	| 'description'
	| 'last_payment_error'
	| 'latest_charge'
	| 'livemode'
	| 'metadata'
	| 'next_action'
	| 'on_behalf_of'
	| 'payment_method'
	| 'payment_method_types'
	| 'receipt_email'
	| 'review'
	| 'setup_future_usage'
	| 'shipping'
	| 'statement_descriptor'
	| 'statement_descriptor_suffix'
	| 'status'
	| 'transfer_group'
>;

export type FakeCharge = Fake<
	Stripe.Charge,
	| 'id'
	| 'object'
	| 'amount'
	| 'amount_captured'
	| 'amount_refunded'
	| 'application'
	| 'application_fee'
	| 'application_fee_amount'
	| 'balance_transaction'
	| 'billing_details'
	| 'calculated_statement_descriptor'
	| 'captured'
	| 'created'
	| 'currency'
	| 'customer'
	| 'description'
	| 'disputed'
	| 'failure_balance_transaction'
	| 'failure_code'
	| 'failure_message'
	| 'fraud_details'
	| 'livemode'
	| 'metadata'
	| 'on_behalf_of'
	| 'outcome'
	| 'paid'
	| 'payment_intent'
	| 'payment_method'
	| 'receipt_email'
	| 'receipt_number'
	| 'receipt_url'
	| 'refunded'
	| 'review'
	| 'shipping'
	| 'source_transfer'
	| 'statement_descriptor'
	| 'statement_descriptor_suffix'
	| 'status'
	| 'transfer_data'
	| 'transfer_group',
	{ payment_method_details: { type: 'card'; card: CardDetails } }
>;

export type FakeBalanceTransaction = Pick<
	Stripe.BalanceTransaction,
	| 'id'
	| 'object'
	| 'amount'
	| 'available_on'
	| 'balance_type'
	| 'created'
	| 'currency'
	| 'description'
	| 'exchange_rate'
	| 'fee'
	| 'fee_details'
	| 'net'
	| 'reporting_category'
	| 'source'
	| 'status'
	| 'type'
>;

export type FakeRefund = Pick<
	Stripe.Refund,
	| 'id'
	| 'object'
	| 'amount'
	| 'balance_transaction'
	| 'charge'
	| 'created'
	| 'currency'
	| 'customer'
	| 'customer_account'
	| 'metadata'
	| 'payment_intent'
	| 'payment_method'
	| 'reason'
	| 'receipt_number'
	| 'source_transfer_reversal'
	| 'status'
	| 'transfer_reversal'
>;

export type FakeDispute = Fake<
	Stripe.Dispute,
	| 'id'
	| 'object'
	| 'amount'
	| 'charge'
	| 'created'
	| 'currency'
	| 'enhanced_eligibility_types'
	| 'evidence_details'
	| 'is_charge_refundable'
	| 'livemode'
	| 'metadata'
	| 'payment_intent'
	| 'reason'
	| 'status',
	{ balance_transactions: FakeBalanceTransaction[] }
>;

export type FakeSubscriptionItem = Fake<
	Stripe.SubscriptionItem,
	| 'id'
	| 'object'
	| 'billing_thresholds'
	| 'created'
	| 'current_period_end'
	| 'current_period_start'
	| 'discounts'
	| 'metadata'
	| 'quantity'
	| 'subscription'
	| 'tax_rates',
	{ plan: FakePlan; price: FakePrice }
>;

export type FakeSubscription = Fake<
	Stripe.Subscription,
	| 'id'
	| 'object'
	| 'application'
	| 'application_fee_percent'
	| 'billing_cycle_anchor'
	| 'billing_thresholds'
	| 'cancel_at'
	| 'cancel_at_period_end'
	| 'canceled_at'
	| 'cancellation_details'
	| 'collection_method'
	| 'created'
	| 'currency'
	| 'customer'
	| 'days_until_due'
	| 'default_payment_method'
	| 'default_source'
	| 'description'
	| 'discounts'
	| 'ended_at'
	| 'latest_invoice'
	| 'livemode'
	| 'metadata'
	| 'next_pending_invoice_item_invoice'
	| 'on_behalf_of'
	| 'pause_collection'
	| 'pending_setup_intent'
	| 'pending_update'
	| 'schedule'
	| 'start_date'
	| 'status'
	| 'test_clock'
	| 'transfer_data'
	| 'trial_end'
	| 'trial_start',
	{ items: FakeList<FakeSubscriptionItem> }
>;

export type FakeInvoiceLine = Fake<
	Stripe.InvoiceLineItem,
	| 'id'
	| 'object'
	| 'amount'
	| 'currency'
	| 'description'
	| 'discount_amounts'
	| 'discountable'
	| 'discounts'
	| 'invoice'
	| 'livemode'
	| 'metadata'
	| 'parent'
	| 'period'
	| 'pretax_credit_amounts'
	| 'quantity'
	| 'subscription'
	| 'subtotal'
	| 'taxes',
	{
		pricing: {
			type: 'price_details';
			price_details: { price: string; product: string };
			unit_amount_decimal: string;
		};
	}
>;

export type FakeInvoice = Fake<
	Stripe.Invoice,
	| 'id'
	| 'object'
	| 'account_country'
	| 'account_name'
	| 'amount_due'
	| 'amount_overpaid'
	| 'amount_paid'
	| 'amount_remaining'
	| 'amount_shipping'
	| 'application'
	| 'attempt_count'
	| 'attempted'
	| 'automatically_finalizes_at'
	| 'billing_reason'
	| 'collection_method'
	| 'created'
	| 'currency'
	| 'customer'
	| 'customer_email'
	| 'customer_name'
	| 'default_payment_method'
	| 'description'
	| 'due_date'
	| 'effective_at'
	| 'ending_balance'
	| 'footer'
	| 'hosted_invoice_url'
	| 'invoice_pdf'
	| 'last_finalization_error'
	| 'livemode'
	| 'metadata'
	| 'next_payment_attempt'
	| 'number'
	| 'parent'
	| 'period_end'
	| 'period_start'
	| 'receipt_number'
	| 'starting_balance'
	| 'statement_descriptor'
	| 'status'
	| 'status_transitions'
	| 'subtotal'
	| 'subtotal_excluding_tax'
	| 'test_clock'
	| 'total'
	| 'total_excluding_tax'
	| 'webhooks_delivered_at',
	{ lines: FakeList<FakeInvoiceLine> }
>;

export type FakeInvoicePayment = Pick<
	Stripe.InvoicePayment,
	| 'id'
	| 'object'
	| 'amount_paid'
	| 'amount_requested'
	| 'created'
	| 'currency'
	| 'invoice'
	| 'is_default'
	| 'livemode'
	| 'payment'
	| 'status'
	| 'status_transitions'
>;

export type FakePayout = Pick<
	Stripe.Payout,
	| 'id'
	| 'object'
	| 'amount'
	| 'application_fee'
	| 'application_fee_amount'
	| 'arrival_date'
	| 'automatic'
	| 'balance_transaction'
	| 'created'
	| 'currency'
	| 'description'
	| 'destination'
	| 'failure_balance_transaction'
	| 'failure_code'
	| 'failure_message'
	| 'livemode'
	| 'metadata'
	| 'method'
	| 'original_payout'
	| 'reconciliation_status'
	| 'reversed_by'
	| 'source_type'
	| 'statement_descriptor'
	| 'status'
	| 'trace_id'
	| 'type'
>;

export type FakePortalSession = Pick<
	Stripe.BillingPortal.Session,
	| 'id'
	| 'object'
	| 'configuration'
	| 'created'
	| 'customer'
	| 'customer_account'
	| 'flow'
	| 'livemode'
	| 'locale'
	| 'on_behalf_of'
	| 'return_url'
	| 'url'
>;

export type FakeEvent = Fake<
	Stripe.EventBase,
	'id' | 'object' | 'api_version' | 'created' | 'livemode' | 'pending_webhooks' | 'request',
	{
		type: Stripe.Event.Type;
		data: { object: { id: string; object: string }; previous_attributes?: Record<string, unknown> };
	}
>;

export type FakeBalance = Pick<Stripe.Balance, 'object' | 'available' | 'pending' | 'livemode'>;

export const DEFAULT_CURRENCY = 'usd';

/**
 * The processing fee the fake takes from each card payment: 2.9 % of the amount, rounded half up
 * to the cent, plus 30 ¢. This is the common standard rate for US cards, used as a rule of thumb;
 * real accounts may have other rates, and the app reads the fee from the balance transaction
 * rather than computing it.
 */
export function processingFee(amount: number): number {
	return Math.floor((amount * 29 + 500) / 1000) + 30;
}

/** The fee taken when a dispute is lost ($15.00, the standard US amount; a rule of thumb). */
export const DISPUTE_FEE = 1500;

export function emptyList<T>(url: string, data: T[] = []): FakeList<T> {
	return { object: 'list', data, has_more: false, url };
}

/** `interval_count` intervals after `anchor`, keeping the anchor's day of month where it can. */
export function addInterval(
	anchor: number,
	interval: Stripe.Price.Recurring.Interval,
	count: number
): number {
	const date = new Date(anchor * 1000);
	if (interval === 'day') return anchor + count * 86400;
	if (interval === 'week') return anchor + count * 7 * 86400;
	const months = interval === 'year' ? 12 * count : count;
	const day = date.getUTCDate();
	const target = new Date(
		Date.UTC(
			date.getUTCFullYear(),
			date.getUTCMonth() + months,
			1,
			date.getUTCHours(),
			date.getUTCMinutes(),
			date.getUTCSeconds()
		)
	);
	const lastDay = new Date(
		Date.UTC(target.getUTCFullYear(), target.getUTCMonth() + 1, 0)
	).getUTCDate();
	target.setUTCDate(Math.min(day, lastDay));
	return Math.floor(target.getTime() / 1000);
}
