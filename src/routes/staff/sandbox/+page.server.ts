// Staff controls for the local test payment service (fake mode only): move its clock, refund,
// dispute, pay out and send events again. Each action waits until the app has applied the events
// it caused, so the page that reloads afterwards shows their effects.
import { error, fail } from '@sveltejs/kit';
import {
	and,
	count,
	desc,
	eq,
	inArray,
	isNotNull,
	isNull,
	notInArray,
	or,
	type SQL
} from 'drizzle-orm';
import { audit } from '$lib/server/audit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { adoptions, gifts, patients } from '$lib/server/db/schema';
import { parseForm, type FieldErrors } from '$lib/server/forms';
import { formatUtc } from '$lib/server/mail/mailbox';
import {
	advanceClock,
	availableBalance,
	closeDispute,
	createPayout,
	fakeMode,
	fakeNow,
	flushWebhooks,
	listEvents,
	openDispute,
	redeliver,
	refund,
	runningFakeStripe,
	type EventView
} from '$lib/server/payments/fake';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';
import {
	advanceForm,
	closeDisputeForm,
	DEFAULT_ADVANCE_DAYS,
	disputeForm,
	redeliverForm,
	refundForm
} from './forms';

const area = STAFF_AREAS.sandbox.roles;
const LIST_SIZE = 50;
const OPTIONS_SIZE = 100;
const CLOSED_DISPUTE = ['won', 'lost'];

type SandboxAction = 'advance' | 'refund' | 'dispute' | 'closeDispute' | 'payout' | 'redeliver';

/** With a real key there is nothing to drive: the page does not exist. */
function sandboxOnly(): void {
	if (!fakeMode() || !runningFakeStripe()) error(404, 'Not found.');
}

function money(cents: number, currency = 'usd'): string {
	return (cents / 100).toLocaleString('en-US', {
		style: 'currency',
		currency: currency.toUpperCase()
	});
}

function utc(unixSeconds: number): string {
	return formatUtc(new Date(unixSeconds * 1000));
}

function refused(
	action: SandboxAction,
	message: string,
	errors: FieldErrors = {},
	values: Record<string, string> = {}
) {
	return fail(400, { action, message, errors, values });
}

function invalid(
	action: SandboxAction,
	parsed: { errors: FieldErrors; values: Record<string, string> }
) {
	return refused(action, Object.values(parsed.errors)[0], parsed.errors, parsed.values);
}

/** The events created after `marker` (the newest event id before an action), newest first. */
function eventsAfter(marker: string | null): EventView[] {
	const out: EventView[] = [];
	for (const e of listEvents(Number.MAX_SAFE_INTEGER)) {
		if (e.id === marker) break;
		out.push(e);
	}
	return out;
}

function newestEvent(): string | null {
	return listEvents(1)[0]?.id ?? null;
}

/** Delivers what the action queued; says so when some of it could not be delivered yet. */
async function deliver(): Promise<string> {
	await flushWebhooks();
	const waiting = runningFakeStripe()?.pendingWebhooks().length ?? 0;
	if (!waiting) return '';
	return waiting === 1
		? ' One event could not be delivered yet; see the event list.'
		: ` ${waiting} events could not be delivered yet; see the event list.`;
}

function plural(n: number, one: string, many: string): string {
	return `${n} ${n === 1 ? one : many}`;
}

async function giftWith(where: SQL) {
	const [gift] = await db()
		.select({
			id: gifts.id,
			status: gifts.status,
			amountCents: gifts.amountCents,
			refundedCents: gifts.refundedCents,
			currency: gifts.currency,
			chargeId: gifts.chargeId,
			disputeId: gifts.disputeId,
			disputeStatus: gifts.disputeStatus,
			patientName: patients.name
		})
		.from(gifts)
		.innerJoin(adoptions, eq(gifts.adoptionId, adoptions.id))
		.innerJoin(patients, eq(adoptions.patientId, patients.id))
		.where(where);
	return gift;
}

const giftColumns = {
	id: gifts.id,
	patientName: patients.name,
	interval: adoptions.interval,
	status: gifts.status,
	amountCents: gifts.amountCents,
	refundedCents: gifts.refundedCents,
	netCents: gifts.netCents,
	currency: gifts.currency,
	chargeId: gifts.chargeId,
	disputeId: gifts.disputeId,
	disputeStatus: gifts.disputeStatus,
	payoutId: gifts.payoutId,
	createdAt: gifts.createdAt
};

function giftsQuery() {
	return db()
		.select(giftColumns)
		.from(gifts)
		.innerJoin(adoptions, eq(gifts.adoptionId, adoptions.id))
		.innerJoin(patients, eq(adoptions.patientId, patients.id));
}

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	sandboxOnly();
	const [recent, refundable, openDisputes] = await Promise.all([
		giftsQuery().orderBy(desc(gifts.createdAt), desc(gifts.id)).limit(LIST_SIZE),
		giftsQuery()
			.where(
				and(
					isNotNull(gifts.chargeId),
					inArray(gifts.status, ['paid', 'partially_refunded']),
					isNull(gifts.disputeId)
				)
			)
			.orderBy(desc(gifts.createdAt), desc(gifts.id))
			.limit(OPTIONS_SIZE),
		giftsQuery()
			.where(
				and(
					isNotNull(gifts.disputeId),
					or(isNull(gifts.disputeStatus), notInArray(gifts.disputeStatus, CLOSED_DISPUTE))
				)
			)
			.orderBy(desc(gifts.createdAt), desc(gifts.id))
			.limit(OPTIONS_SIZE)
	]);
	const now = fakeNow();
	return {
		clock: { iso: new Date(now * 1000).toISOString(), label: utc(now) },
		availableCents: availableBalance(),
		defaultDays: DEFAULT_ADVANCE_DAYS,
		gifts: recent.map((g) => ({ ...g, createdAt: g.createdAt.toISOString() })),
		refundable: refundable.map((g) => ({
			chargeId: g.chargeId!,
			label: `${g.patientName} · ${money(g.amountCents - g.refundedCents, g.currency)} left of ${money(g.amountCents, g.currency)} · ${g.chargeId}`
		})),
		openDisputes: openDisputes.map((g) => ({
			disputeId: g.disputeId!,
			label: `${g.patientName} · ${money(g.amountCents, g.currency)} · ${g.disputeId}`
		})),
		events: listEvents(LIST_SIZE).map((e) => ({
			id: e.id,
			type: e.type,
			objectId: e.objectId,
			created: utc(e.created),
			delivery: e.delivery
				? {
						status: e.delivery.status,
						attempts: e.delivery.attempts,
						lastStatus: e.delivery.lastStatus,
						lastError: e.delivery.lastError
					}
				: null
		}))
	};
};

export const actions: Actions = {
	advance: async (event) => {
		const user = requireRoles(event, ...area);
		sandboxOnly();
		const parsed = parseForm(advanceForm, await event.request.formData());
		if (!parsed.ok) return invalid('advance', parsed);
		const { days } = parsed.data;
		const marker = newestEvent();
		const moved = advanceClock(days);
		if (!moved.ok) return refused('advance', moved.message, {}, parsed.values);
		const caused = eventsAfter(marker);
		await audit(db(), user.id, 'sandbox.advance', null, {
			days,
			clock: new Date(moved.now * 1000).toISOString(),
			events: caused.length
		});
		const waiting = await deliver();
		const paid = caused.filter((e) => e.type === 'invoice.paid').length;
		const failed = caused.filter((e) => e.type === 'invoice.payment_failed').length;
		const ended = caused.filter((e) => e.type === 'customer.subscription.deleted').length;
		const arrived = caused.filter((e) => e.type === 'payout.paid').length;
		const parts = [
			paid || failed
				? `renewals: ${paid} paid, ${failed} failed`
				: 'no monthly gift was due for renewal',
			...(ended ? [plural(ended, 'monthly gift ended', 'monthly gifts ended')] : []),
			...(arrived ? [plural(arrived, 'payout arrived', 'payouts arrived')] : [])
		];
		return {
			action: 'advance' as const,
			done: `Moved the clock ${plural(days, 'day', 'days')}, to ${utc(moved.now)}: ${parts.join('; ')}.${waiting}`
		};
	},

	refund: async (event) => {
		const user = requireRoles(event, ...area);
		sandboxOnly();
		const parsed = parseForm(refundForm, await event.request.formData());
		if (!parsed.ok) return invalid('refund', parsed);
		const { chargeId, amount } = parsed.data;
		const gift = await giftWith(eq(gifts.chargeId, chargeId));
		if (!gift) {
			return refused(
				'refund',
				'There is no gift with that charge here; choose a payment from the list.',
				{ chargeId: 'Choose a payment from the list.' },
				parsed.values
			);
		}
		const left = gift.amountCents - gift.refundedCents;
		if (left <= 0) {
			return refused(
				'refund',
				'This payment has been refunded in full already.',
				{ chargeId: 'Choose another payment.' },
				parsed.values
			);
		}
		if (amount === 0 || (amount !== null && amount > left)) {
			const message =
				amount === 0
					? 'Enter an amount above $0.00, or leave it empty to refund all that is left.'
					: `The refund can be at most ${money(left, gift.currency)}, what is left of this payment.`;
			return refused('refund', message, { amount: message }, parsed.values);
		}
		const result = refund(chargeId, amount ?? undefined);
		if (!result.ok) return refused('refund', result.message, {}, parsed.values);
		await audit(db(), user.id, 'sandbox.refund', chargeId, {
			refundId: result.refund.id,
			amountCents: result.refund.amount
		});
		const waiting = await deliver();
		return {
			action: 'refund' as const,
			done: `Refunded ${money(result.refund.amount, gift.currency)} of the ${money(gift.amountCents, gift.currency)} gift for ${gift.patientName} (${chargeId}).${waiting}`
		};
	},

	dispute: async (event) => {
		const user = requireRoles(event, ...area);
		sandboxOnly();
		const parsed = parseForm(disputeForm, await event.request.formData());
		if (!parsed.ok) return invalid('dispute', parsed);
		const { chargeId } = parsed.data;
		const gift = await giftWith(eq(gifts.chargeId, chargeId));
		if (!gift) {
			return refused(
				'dispute',
				'There is no gift with that charge here; choose a payment from the list.',
				{ chargeId: 'Choose a payment from the list.' },
				parsed.values
			);
		}
		const result = openDispute(chargeId);
		if (!result.ok) return refused('dispute', result.message, {}, parsed.values);
		await audit(db(), user.id, 'sandbox.dispute', chargeId, { disputeId: result.dispute.id });
		const waiting = await deliver();
		return {
			action: 'dispute' as const,
			done: `Opened dispute ${result.dispute.id} on the ${money(gift.amountCents, gift.currency)} gift for ${gift.patientName}. Close it below as won or lost.${waiting}`
		};
	},

	closeDispute: async (event) => {
		const user = requireRoles(event, ...area);
		sandboxOnly();
		const parsed = parseForm(closeDisputeForm, await event.request.formData());
		if (!parsed.ok) return invalid('closeDispute', parsed);
		const { disputeId, outcome } = parsed.data;
		const gift = await giftWith(eq(gifts.disputeId, disputeId));
		if (!gift) {
			return refused(
				'closeDispute',
				'There is no gift with that dispute here; choose a dispute from the list.',
				{ disputeId: 'Choose a dispute from the list.' },
				parsed.values
			);
		}
		const result = closeDispute(disputeId, outcome);
		if (!result.ok) return refused('closeDispute', result.message, {}, parsed.values);
		await audit(db(), user.id, 'sandbox.closeDispute', disputeId, {
			chargeId: gift.chargeId,
			outcome
		});
		const waiting = await deliver();
		const effect =
			outcome === 'won'
				? 'won: no money moved and the gift counts as paid again'
				: `lost: ${money(result.dispute.amount, gift.currency)} and the dispute fee left the balance, and the gift stays disputed`;
		return {
			action: 'closeDispute' as const,
			done: `Dispute ${disputeId} on the gift for ${gift.patientName} closed as ${effect}.${waiting}`
		};
	},

	payout: async (event) => {
		const user = requireRoles(event, ...area);
		sandboxOnly();
		const result = createPayout({ arrivalDays: 0 });
		if (!result.ok) return refused('payout', result.message);
		const payout = result.payout;
		await audit(db(), user.id, 'sandbox.payout', payout.id, {
			amountCents: payout.amount,
			status: payout.status
		});
		const waiting = await deliver();
		if (payout.status === 'failed') {
			return {
				action: 'payout' as const,
				done: `Payout ${payout.id} of ${money(payout.amount, payout.currency)} failed (${payout.failure_message ?? 'no reason given'}); the amount went back to the balance.${waiting}`
			};
		}
		const [{ n }] = await db()
			.select({ n: count() })
			.from(gifts)
			.where(eq(gifts.payoutId, payout.id));
		return {
			action: 'payout' as const,
			done: `Paid out ${money(payout.amount, payout.currency)} in payout ${payout.id}; it arrived at once and covers ${plural(n, 'gift', 'gifts')}.${waiting}`
		};
	},

	redeliver: async (event) => {
		const user = requireRoles(event, ...area);
		sandboxOnly();
		const parsed = parseForm(redeliverForm, await event.request.formData());
		if (!parsed.ok) return invalid('redeliver', parsed);
		const { eventId } = parsed.data;
		const result = redeliver(eventId);
		if (!result.ok) return refused('redeliver', result.message, {}, parsed.values);
		await audit(db(), user.id, 'sandbox.redeliver', eventId);
		const waiting = await deliver();
		const sent = listEvents(Number.MAX_SAFE_INTEGER).find((e) => e.id === eventId);
		const answer = sent?.delivery?.lastStatus
			? `the app answered HTTP ${sent.delivery.lastStatus}`
			: `it could not be delivered (${sent?.delivery?.lastError ?? 'no answer'})`;
		return {
			action: 'redeliver' as const,
			done: `Sent event ${eventId} (${sent?.type ?? 'unknown type'}) again; ${answer}.${waiting}`
		};
	}
};
