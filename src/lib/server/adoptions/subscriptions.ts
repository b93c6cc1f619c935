// Monthly adoptions follow their subscription at the processor: its amount, its level (metadata)
// and a cancellation at the end of the paid month. A supporter changes the amount or the level
// from the account; the processor's `customer.subscription.updated` event brings the same state
// back, and an older event arriving late never overwrites a newer one.
import { and, eq, isNull, lte, or } from 'drizzle-orm';
import type Stripe from 'stripe';
import { db, type Executor } from '../db';
import { adoptionLevels, adoptions } from '../db/schema';
import { stripe } from '../payments/client';
import { MAX_AMOUNT_CENTS, MIN_AMOUNT_CENTS } from './form';

const money = (cents: number) => `$${(cents / 100).toFixed(2)}`;

/**
 * Writes a subscription's state onto its adoption. `at` is the processor's time of the event;
 * null (a change made here, already confirmed by the processor's answer) leaves the ordering mark.
 */
export async function applySubscriptionState(
	tx: Executor,
	adoptionId: string,
	subscription: Stripe.Subscription,
	at: Date | null
): Promise<void> {
	const item = subscription.items?.data?.[0];
	const amount = item?.price?.unit_amount ?? null;
	const levelId = subscription.metadata?.level_id;
	const [level] = levelId
		? await tx
				.select({ id: adoptionLevels.id, fmv: adoptionLevels.fairMarketValueCents })
				.from(adoptionLevels)
				.where(and(eq(adoptionLevels.id, levelId), eq(adoptionLevels.interval, 'month')))
		: [];
	const cancelAt =
		subscription.cancel_at != null
			? new Date(subscription.cancel_at * 1000)
			: subscription.cancel_at_period_end && item?.current_period_end
				? new Date(item.current_period_end * 1000)
				: null;
	await tx
		.update(adoptions)
		.set({
			...(amount != null && { amountCents: amount }),
			...(level && { levelId: level.id, fairMarketValueCents: level.fmv }),
			cancelAt,
			...(at && { subscriptionSyncedAt: at }),
			updatedAt: new Date()
		})
		.where(
			and(
				eq(adoptions.id, adoptionId),
				eq(adoptions.interval, 'month'),
				at
					? or(isNull(adoptions.subscriptionSyncedAt), lte(adoptions.subscriptionSyncedAt, at))
					: undefined
			)
		);
}

/** A change the supporter asked for that cannot be made; the message says why. */
export class ChangeRefused extends Error {
	constructor(
		readonly field: 'levelId' | 'amount' | 'change',
		message: string
	) {
		super(message);
	}
}

/**
 * Changes a monthly adoption's level or amount from the next month on (no proration: what was
 * paid for this month stays as it is). The adoption must be the account's own, active and monthly.
 */
export async function changeMonthlyGift(input: {
	adoptionId: string;
	userId: string;
	levelId: string;
	amountCents: number | null;
}): Promise<void> {
	const [adoption] = await db()
		.select()
		.from(adoptions)
		.where(and(eq(adoptions.id, input.adoptionId), eq(adoptions.supporterId, input.userId)));
	if (!adoption || adoption.interval !== 'month' || adoption.status !== 'active') {
		throw new ChangeRefused('change', 'That monthly adoption is not yours to change.');
	}
	if (!adoption.subscriptionId) {
		throw new ChangeRefused('change', 'The payment service has not confirmed this adoption yet.');
	}
	const [level] = await db()
		.select()
		.from(adoptionLevels)
		.where(
			and(
				eq(adoptionLevels.id, input.levelId),
				eq(adoptionLevels.active, true),
				eq(adoptionLevels.interval, 'month')
			)
		);
	if (!level) throw new ChangeRefused('levelId', 'Choose one of the monthly levels offered.');
	const amountCents = input.amountCents ?? level.amountCents;
	const minimum = Math.max(level.amountCents, MIN_AMOUNT_CENTS);
	if (amountCents < minimum || amountCents > MAX_AMOUNT_CENTS) {
		throw new ChangeRefused(
			'amount',
			`The ${level.name} level is at least ${money(minimum)} and at most ${money(MAX_AMOUNT_CENTS)} a month.`
		);
	}
	if (amountCents === adoption.amountCents && level.id === adoption.levelId) {
		throw new ChangeRefused('change', 'That is the gift you already give; nothing to change.');
	}

	const current = await stripe().subscriptions.retrieve(adoption.subscriptionId);
	const item = current.items.data[0];
	const product =
		typeof item.price.product === 'string' ? item.price.product : item.price.product.id;
	const updated = await stripe().subscriptions.update(adoption.subscriptionId, {
		items: [
			{
				id: item.id,
				price_data: {
					currency: adoption.currency,
					product,
					unit_amount: amountCents,
					recurring: { interval: 'month' }
				}
			}
		],
		proration_behavior: 'none',
		metadata: { ...current.metadata, level_id: level.id }
	});
	await db().transaction((tx) => applySubscriptionState(tx, adoption.id, updated, null));
}
