// Applying the processor's webhook events. Everything the effects need from the processor is
// fetched first; then one transaction records the event id and applies the effects, so an event
// is applied once however often it is delivered, and a crash before the commit leaves nothing
// behind for the redelivery to trip over. Inserts are keyed on processor ids, so events arriving
// out of order (an invoice before its checkout session) reach the same final state.
import { and, eq, gt, ne, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import type Stripe from 'stripe';
import { db, type Executor } from '../db';
import { adoptions, gifts, payouts, processorEvents } from '../db/schema';
import { notifyGiftIfDue } from '../adoptions/gifts';
import { queueGiftThanks, queueMonthlyGiftFailed } from '../adoptions/mail';
import { applySubscriptionState } from '../adoptions/subscriptions';
import { issueGiftReceipt, reviseGiftReceipt } from '../ledger/gift-receipts';
import { fetchPayoutLines, storePayoutLines } from '../ledger/reconcile';
import { stripe } from './client';

export type EventOutcome = 'applied' | 'duplicate' | 'ignored';

const id = (value: string | { id: string } | null | undefined): string | null =>
	value == null ? null : typeof value === 'string' ? value : value.id;

interface PaymentDetails {
	paymentIntentId: string;
	chargeId: string | null;
	balanceTransactionId: string | null;
	amountCents: number;
	currency: string;
	feeCents: number | null;
	netCents: number | null;
	customerId: string | null;
	paidAt: Date;
	/** Refunds and disputes as they stand now, in case their events came first. */
	refundedCents: number;
	disputed: boolean;
}

/** A succeeded payment intent with its charge and balance transaction (fee and net). */
async function paymentDetails(paymentIntentId: string): Promise<PaymentDetails> {
	const intent = await stripe().paymentIntents.retrieve(paymentIntentId);
	const chargeId = id(intent.latest_charge);
	const charge = chargeId ? await stripe().charges.retrieve(chargeId) : null;
	const txnId = charge ? id(charge.balance_transaction) : null;
	const txn = txnId ? await stripe().balanceTransactions.retrieve(txnId) : null;
	return {
		paymentIntentId,
		chargeId,
		balanceTransactionId: txnId,
		amountCents: charge?.amount ?? intent.amount,
		currency: charge?.currency ?? intent.currency,
		feeCents: txn?.fee ?? null,
		netCents: txn?.net ?? null,
		customerId: id(intent.customer),
		paidAt: new Date((charge?.created ?? intent.created) * 1000),
		refundedCents: charge?.amount_refunded ?? 0,
		disputed: charge?.disputed ?? false
	};
}

/** The subscription an invoice belongs to, whichever API shape the invoice has. */
function invoiceSubscription(invoice: Stripe.Invoice): string | null {
	const parent = invoice.parent as { subscription_details?: { subscription?: unknown } } | null;
	const fromParent = parent?.subscription_details?.subscription as string | { id: string } | null;
	const legacy = (invoice as unknown as { subscription?: string | { id: string } }).subscription;
	return id(fromParent ?? legacy ?? null);
}

/** The payment intent that paid an invoice, whichever API shape the invoice has. */
async function invoicePaymentIntent(invoice: Stripe.Invoice): Promise<string | null> {
	const legacy = (invoice as unknown as { payment_intent?: string | { id: string } })
		.payment_intent;
	if (legacy) return id(legacy);
	let payments = invoice.payments?.data;
	if (!payments) {
		const full = await stripe().invoices.retrieve(invoice.id!, { expand: ['payments'] });
		payments = full.payments?.data;
	}
	const paid = payments?.find((p) => p.status === 'paid') ?? payments?.[0];
	return id(
		(paid?.payment as { payment_intent?: string | { id: string } } | undefined)?.payment_intent
	);
}

/** The adoption a subscription pays for, from its metadata. */
async function adoptionOfSubscription(subscriptionId: string): Promise<string | null> {
	const [known] = await db()
		.select({ id: adoptions.id })
		.from(adoptions)
		.where(eq(adoptions.subscriptionId, subscriptionId));
	if (known) return known.id;
	const subscription = await stripe().subscriptions.retrieve(subscriptionId);
	return subscription.metadata?.adoption_id ?? null;
}

/**
 * The fair market value of the goods a new gift of this adoption buys, or null for an unknown
 * adoption. The goods (a keepsake kit) are sent once: a monthly adoption's later gifts buy none.
 */
async function adoptionValue(tx: Executor, adoptionId: string): Promise<number | null> {
	const [adoption] = await tx
		.select({ fmv: adoptions.fairMarketValueCents })
		.from(adoptions)
		.where(eq(adoptions.id, adoptionId));
	if (!adoption) return null;
	if (adoption.fmv === 0) return 0;
	const [earlier] = await tx
		.select({ id: gifts.id })
		.from(gifts)
		.where(
			and(
				eq(gifts.adoptionId, adoptionId),
				ne(gifts.status, 'failed'),
				gt(gifts.fairMarketValueCents, 0)
			)
		)
		.limit(1);
	return earlier ? 0 : adoption.fmv;
}

async function recordGift(
	tx: Executor,
	adoptionId: string,
	details: PaymentDetails,
	extra: {
		checkoutSessionId?: string | null;
		invoiceId?: string | null;
		subscriptionId?: string | null;
	}
) {
	const fmv = await adoptionValue(tx, adoptionId);
	if (fmv === null) return;
	const inserted = await tx
		.insert(gifts)
		.values({
			id: randomUUID(),
			adoptionId,
			status: details.disputed
				? 'disputed'
				: details.refundedCents >= details.amountCents
					? 'refunded'
					: details.refundedCents > 0
						? 'partially_refunded'
						: 'paid',
			refundedCents: details.refundedCents,
			amountCents: details.amountCents,
			currency: details.currency,
			feeCents: details.feeCents,
			netCents: details.netCents,
			fairMarketValueCents: fmv,
			checkoutSessionId: extra.checkoutSessionId ?? null,
			paymentIntentId: details.paymentIntentId,
			chargeId: details.chargeId,
			invoiceId: extra.invoiceId ?? null,
			subscriptionId: extra.subscriptionId ?? null,
			customerId: details.customerId,
			balanceTransactionId: details.balanceTransactionId,
			paidAt: details.paidAt
		})
		.onConflictDoNothing()
		.returning({ id: gifts.id });
	await activate(tx, adoptionId, details.paidAt, {
		customerId: details.customerId,
		subscriptionId: extra.subscriptionId ?? null
	});
	// A new gift gets its receipt and the thank-you in the same transaction.
	if (inserted.length) {
		const receipt = await issueGiftReceipt(tx, inserted[0].id);
		if (receipt) await queueGiftThanks(tx, inserted[0].id, receipt);
	}
}

async function activate(
	tx: Executor,
	adoptionId: string,
	at: Date,
	ids: {
		customerId?: string | null;
		subscriptionId?: string | null;
		checkoutSessionId?: string | null;
	}
) {
	await tx
		.update(adoptions)
		.set({
			status: sql`CASE WHEN ${adoptions.status} IN ('pending', 'failed') THEN 'active' ELSE ${adoptions.status} END`,
			startedAt: sql`COALESCE(${adoptions.startedAt}, ${at.toISOString()}::timestamptz)`,
			customerId: sql`COALESCE(${adoptions.customerId}, ${ids.customerId ?? null})`,
			subscriptionId: sql`COALESCE(${adoptions.subscriptionId}, ${ids.subscriptionId ?? null})`,
			checkoutSessionId: sql`COALESCE(${adoptions.checkoutSessionId}, ${ids.checkoutSessionId ?? null})`,
			updatedAt: new Date()
		})
		.where(eq(adoptions.id, adoptionId));
	// A gift with no delivery date (or one already past) is announced to its recipient now.
	await notifyGiftIfDue(tx, adoptionId);
}

type Effect = (tx: Executor) => Promise<void>;

/** Reads what an event needs from the processor and returns its effect, or null to ignore it. */
async function prepare(event: Stripe.Event): Promise<Effect | null> {
	switch (event.type) {
		case 'checkout.session.completed':
		case 'checkout.session.async_payment_succeeded': {
			const session = event.data.object;
			const adoptionId = session.metadata?.adoption_id ?? session.client_reference_id;
			if (!adoptionId) return null;
			const subscriptionId = id(session.subscription);
			const customerId = id(session.customer);
			if (session.mode === 'payment') {
				if (session.payment_status !== 'paid') return null; // async: wait for succeeded
				const details = await paymentDetails(id(session.payment_intent)!);
				return (tx) => recordGift(tx, adoptionId, details, { checkoutSessionId: session.id });
			}
			// Subscription mode: the money is recorded by invoice.paid; this links the ids.
			return (tx) =>
				activate(tx, adoptionId, new Date(event.created * 1000), {
					customerId,
					subscriptionId,
					checkoutSessionId: session.id
				});
		}
		case 'checkout.session.async_payment_failed': {
			const session = event.data.object;
			const adoptionId = session.metadata?.adoption_id ?? session.client_reference_id;
			if (!adoptionId) return null;
			return async (tx) => {
				await tx
					.update(adoptions)
					.set({ status: 'failed', updatedAt: new Date() })
					.where(and(eq(adoptions.id, adoptionId), eq(adoptions.status, 'pending')));
			};
		}
		case 'invoice.paid': {
			const invoice = event.data.object;
			const subscriptionId = invoiceSubscription(invoice);
			if (!subscriptionId) return null;
			const adoptionId = await adoptionOfSubscription(subscriptionId);
			const intentId = await invoicePaymentIntent(invoice);
			if (!adoptionId || !intentId) return null;
			const details = await paymentDetails(intentId);
			return (tx) => recordGift(tx, adoptionId, details, { invoiceId: invoice.id, subscriptionId });
		}
		case 'invoice.payment_failed': {
			const invoice = event.data.object;
			const subscriptionId = invoiceSubscription(invoice);
			if (!subscriptionId) return null;
			const adoptionId = await adoptionOfSubscription(subscriptionId);
			if (!adoptionId) return null;
			const message =
				(invoice as unknown as { last_finalization_error?: { message?: string } })
					.last_finalization_error?.message ?? 'The monthly payment failed.';
			return async (tx) => {
				if ((await adoptionValue(tx, adoptionId)) === null) return;
				const inserted = await tx
					.insert(gifts)
					.values({
						id: randomUUID(),
						adoptionId,
						status: 'failed',
						amountCents: invoice.amount_due,
						currency: invoice.currency,
						fairMarketValueCents: 0,
						invoiceId: invoice.id,
						subscriptionId,
						customerId: id(invoice.customer),
						failureMessage: message
					})
					.onConflictDoNothing()
					.returning({ id: gifts.id });
				if (inserted.length) await queueMonthlyGiftFailed(tx, inserted[0].id);
			};
		}
		case 'customer.subscription.updated': {
			const subscription = event.data.object;
			const adoptionId =
				subscription.metadata?.adoption_id ?? (await adoptionOfSubscription(subscription.id));
			if (!adoptionId) return null;
			return (tx) =>
				applySubscriptionState(tx, adoptionId, subscription, new Date(event.created * 1000));
		}
		case 'customer.subscription.deleted': {
			const subscription = event.data.object;
			const adoptionId =
				subscription.metadata?.adoption_id ?? (await adoptionOfSubscription(subscription.id));
			if (!adoptionId) return null;
			const endedAt = new Date((subscription.ended_at ?? event.created) * 1000);
			return async (tx) => {
				await tx
					.update(adoptions)
					.set({
						status: 'cancelled',
						endedAt,
						subscriptionId: sql`COALESCE(${adoptions.subscriptionId}, ${subscription.id})`,
						updatedAt: new Date()
					})
					.where(eq(adoptions.id, adoptionId));
			};
		}
		case 'charge.refunded': {
			const charge = event.data.object;
			return async (tx) => {
				const refunded = charge.amount_refunded;
				await tx
					.update(gifts)
					.set({
						refundedCents: sql`GREATEST(${gifts.refundedCents}, ${refunded})`,
						status: refunded >= charge.amount ? 'refunded' : 'partially_refunded',
						updatedAt: new Date()
					})
					.where(eq(gifts.chargeId, charge.id));
				const [gift] = await tx
					.select({ id: gifts.id })
					.from(gifts)
					.where(eq(gifts.chargeId, charge.id));
				if (gift) await reviseGiftReceipt(tx, gift.id);
			};
		}
		case 'charge.dispute.created':
		case 'charge.dispute.closed': {
			const dispute = event.data.object;
			const chargeId = id(dispute.charge);
			if (!chargeId) return null;
			return async (tx) => {
				await tx
					.update(gifts)
					.set({
						disputeId: dispute.id,
						disputeStatus: dispute.status,
						status:
							event.type === 'charge.dispute.closed' && dispute.status === 'won'
								? sql`CASE WHEN ${gifts.refundedCents} > 0 THEN 'partially_refunded' ELSE 'paid' END`
								: 'disputed',
						updatedAt: new Date()
					})
					.where(eq(gifts.chargeId, chargeId));
			};
		}
		case 'payout.paid':
		case 'payout.failed':
		case 'payout.created':
		case 'payout.updated': {
			const payout = event.data.object;
			// What the payout paid out, for reconciliation (read before the transaction).
			const lines = event.type === 'payout.paid' ? await fetchPayoutLines(payout.id) : [];
			return async (tx) => {
				const values = {
					status: payout.status,
					amountCents: payout.amount,
					currency: payout.currency,
					arrivalDate: new Date(payout.arrival_date * 1000),
					failureMessage: payout.failure_message ?? null,
					updatedAt: new Date()
				};
				await tx
					.insert(payouts)
					.values({ id: payout.id, ...values })
					.onConflictDoUpdate({ target: payouts.id, set: values });
				if (lines.length) await storePayoutLines(tx, payout.id, lines);
			};
		}
		default:
			return null;
	}
}

/** Applies one verified event once. Throws (so the endpoint answers 5xx) when it cannot. */
export async function applyEvent(event: Stripe.Event): Promise<EventOutcome> {
	const [seen] = await db()
		.select({ id: processorEvents.id })
		.from(processorEvents)
		.where(eq(processorEvents.id, event.id));
	if (seen) return 'duplicate';
	const effect = await prepare(event);
	return db().transaction(async (tx) => {
		const recorded = await tx
			.insert(processorEvents)
			.values({ id: event.id, type: event.type, createdAt: new Date(event.created * 1000) })
			.onConflictDoNothing()
			.returning({ id: processorEvents.id });
		if (!recorded.length) return 'duplicate';
		if (!effect) return 'ignored';
		await effect(tx);
		return 'applied';
	});
}
