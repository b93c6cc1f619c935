// Payout reconciliation. A payout pays out a set of balance transactions (charges, refunds, dispute
// withdrawals and reversals, each net of its fee); their nets add up to the payout's amount. Each
// transaction is matched to a gift by its charge; whatever does not match (a charge without a
// gift, a gift without a charge, an amount that differs) is listed for a person to resolve with a
// note, and a named person marks the payout reconciled.
import { and, asc, eq, inArray, isNull } from 'drizzle-orm';
import type Stripe from 'stripe';
import { audit } from '../audit';
import { db, type Executor } from '../db';
import { gifts, payoutLines, payouts, reconciliationNotes } from '../db/schema';
import { stripe } from '../payments/client';

const idOf = (value: string | { id: string } | null | undefined) =>
	value == null ? null : typeof value === 'string' ? value : value.id;

export interface PayoutLine {
	id: string;
	type: string;
	reportingCategory: string;
	amountCents: number;
	feeCents: number;
	netCents: number;
	currency: string;
	sourceId: string | null;
	chargeId: string | null;
	createdAt: Date;
}

/**
 * The balance transactions of a payout, from the processor, with the charge behind each refund
 * and dispute looked up. Read before the transaction that stores them.
 */
export async function fetchPayoutLines(payoutId: string): Promise<PayoutLine[]> {
	const lines: PayoutLine[] = [];
	for await (const txn of stripe().balanceTransactions.list({ payout: payoutId, limit: 100 })) {
		lines.push({
			id: txn.id,
			type: txn.type,
			reportingCategory: txn.reporting_category,
			amountCents: txn.amount,
			feeCents: txn.fee,
			netCents: txn.net,
			currency: txn.currency,
			sourceId: idOf(txn.source as string | { id: string } | null),
			chargeId: null,
			createdAt: new Date(txn.created * 1000)
		});
	}
	for (const line of lines) line.chargeId = await chargeBehind(line);
	return lines;
}

async function chargeBehind(line: PayoutLine): Promise<string | null> {
	const source = line.sourceId;
	if (!source) return null;
	if (source.startsWith('ch_') || source.startsWith('py_')) return source;
	if (source.startsWith('re_')) {
		return idOf((await stripe().refunds.retrieve(source)).charge as Stripe.Refund['charge']);
	}
	if (source.startsWith('dp_') || source.startsWith('du_')) {
		return idOf((await stripe().disputes.retrieve(source)).charge as Stripe.Dispute['charge']);
	}
	return null;
}

/** Stores a payout's lines (again: the same lines change nothing) and links gifts to the payout. */
export async function storePayoutLines(tx: Executor, payoutId: string, lines: PayoutLine[]) {
	const charges = [...new Set(lines.map((l) => l.chargeId).filter((c): c is string => !!c))];
	const giftByCharge = new Map(
		charges.length
			? (
					await tx
						.select({ id: gifts.id, chargeId: gifts.chargeId })
						.from(gifts)
						.where(inArray(gifts.chargeId, charges))
				).map((g) => [g.chargeId!, g.id])
			: []
	);
	for (const line of lines) {
		const giftId = line.chargeId ? (giftByCharge.get(line.chargeId) ?? null) : null;
		const values = { ...line, payoutId, giftId };
		await tx
			.insert(payoutLines)
			.values(values)
			.onConflictDoUpdate({ target: payoutLines.id, set: { giftId, payoutId } });
	}
	const paidCharges = lines
		.filter((l) => l.type === 'charge' || l.type === 'payment')
		.map((l) => l.chargeId)
		.filter((c): c is string => !!c);
	if (paidCharges.length) {
		await tx
			.update(gifts)
			.set({ payoutId, updatedAt: new Date() })
			.where(inArray(gifts.chargeId, paidCharges));
	}
}

export type IssueKind = 'charge-without-gift' | 'gift-without-charge' | 'amount-differs';

export interface ReconciliationIssue {
	key: string;
	kind: IssueKind;
	description: string;
	note: string | null;
}

const money = (cents: number) =>
	(cents / 100).toLocaleString('en-US', { style: 'currency', currency: 'USD' });

/** Everything the payout page shows: the lines, the sums, the differences and their notes. */
export async function payoutReconciliation(payoutId: string, executor: Executor = db()) {
	const [payout] = await executor.select().from(payouts).where(eq(payouts.id, payoutId));
	if (!payout) return null;
	const lines = await executor
		.select()
		.from(payoutLines)
		.where(eq(payoutLines.payoutId, payoutId))
		.orderBy(asc(payoutLines.createdAt), asc(payoutLines.id));
	const linked = await executor
		.select({
			id: gifts.id,
			chargeId: gifts.chargeId,
			amountCents: gifts.amountCents
		})
		.from(gifts)
		.where(eq(gifts.payoutId, payoutId));
	const notes = new Map(
		(
			await executor
				.select()
				.from(reconciliationNotes)
				.where(eq(reconciliationNotes.payoutId, payoutId))
		).map((n) => [n.issueKey, n.note])
	);

	const paid = lines.filter((l) => l.type !== 'payout' && l.type !== 'payout_failure');
	const charges = paid.filter((l) => l.type === 'charge' || l.type === 'payment');
	const refunds = paid.filter((l) => l.type === 'refund' || l.reportingCategory === 'refund');
	const disputes = paid.filter(
		(l) => l.reportingCategory === 'dispute' || l.reportingCategory === 'dispute_reversal'
	);
	const sum = (rows: { amountCents: number }[]) => rows.reduce((a, r) => a + r.amountCents, 0);
	const summary = {
		grossCents: sum(charges),
		refundCents: sum(refunds),
		disputeCents: sum(disputes),
		otherCents: sum(paid) - sum(charges) - sum(refunds) - sum(disputes),
		feeCents: paid.reduce((a, l) => a + l.feeCents, 0),
		netCents: paid.reduce((a, l) => a + l.netCents, 0),
		payoutCents: payout.amountCents
	};

	const issues: ReconciliationIssue[] = [];
	const giftsById = new Map(
		(charges.some((l) => l.giftId)
			? await executor
					.select({ id: gifts.id, amountCents: gifts.amountCents })
					.from(gifts)
					.where(
						inArray(
							gifts.id,
							charges.map((l) => l.giftId).filter((g): g is string => !!g)
						)
					)
			: []
		).map((g) => [g.id, g])
	);
	for (const line of charges) {
		if (!line.giftId) {
			issues.push({
				key: `charge:${line.chargeId ?? line.id}`,
				kind: 'charge-without-gift',
				description: `Charge ${line.chargeId ?? line.id} of ${money(line.amountCents)} has no gift in Tideward.`,
				note: null
			});
			continue;
		}
		const gift = giftsById.get(line.giftId);
		if (gift && gift.amountCents !== line.amountCents) {
			issues.push({
				key: `amount:${line.chargeId}`,
				kind: 'amount-differs',
				description: `Charge ${line.chargeId} is ${money(line.amountCents)}; its gift says ${money(gift.amountCents)}.`,
				note: null
			});
		}
	}
	const paidChargeIds = new Set(charges.map((l) => l.chargeId));
	for (const gift of linked) {
		if (!paidChargeIds.has(gift.chargeId)) {
			issues.push({
				key: `gift:${gift.id}`,
				kind: 'gift-without-charge',
				description: `Gift ${gift.id} (${money(gift.amountCents)}) is marked as paid out here, but the payout has no charge for it.`,
				note: null
			});
		}
	}
	for (const issue of issues) issue.note = notes.get(issue.key) ?? null;

	return {
		payout,
		lines,
		summary,
		balanced: summary.netCents === summary.payoutCents,
		issues,
		open: issues.filter((i) => !i.note).length
	};
}

export class ReconcileRefused extends Error {}

/** A note on one difference (replacing an earlier one). */
export async function noteIssue(payoutId: string, issueKey: string, note: string, actorId: string) {
	const text = note.trim();
	if (!text || text.length > 1000)
		throw new ReconcileRefused('Write a note of 1 to 1,000 characters.');
	const state = await payoutReconciliation(payoutId);
	if (!state) throw new ReconcileRefused('There is no such payout.');
	if (!state.issues.some((i) => i.key === issueKey)) {
		throw new ReconcileRefused('That difference is no longer listed; reload the page.');
	}
	await db().transaction(async (tx) => {
		await tx
			.insert(reconciliationNotes)
			.values({ payoutId, issueKey, note: text, authorId: actorId })
			.onConflictDoUpdate({
				target: [reconciliationNotes.payoutId, reconciliationNotes.issueKey],
				set: { note: text, authorId: actorId, createdAt: new Date() }
			});
		await audit(tx, actorId, 'payout.issue_noted', payoutId, { issueKey });
	});
}

/**
 * Marks a paid payout reconciled by a named person: its lines must add up to the payout to the
 * cent, and every difference must carry a note.
 */
export async function markReconciled(payoutId: string, actorId: string, note = '') {
	const state = await payoutReconciliation(payoutId);
	if (!state) throw new ReconcileRefused('There is no such payout.');
	if (state.payout.status !== 'paid')
		throw new ReconcileRefused('Only a paid payout can be reconciled.');
	if (state.payout.reconciledAt) throw new ReconcileRefused('This payout is already reconciled.');
	if (!state.balanced) {
		throw new ReconcileRefused(
			`The lines add up to ${money(state.summary.netCents)}, not the payout's ${money(state.summary.payoutCents)}.`
		);
	}
	if (state.open > 0) {
		throw new ReconcileRefused(
			`Write a note on each difference first (${state.open} without one).`
		);
	}
	await db().transaction(async (tx) => {
		const done = await tx
			.update(payouts)
			.set({ reconciledBy: actorId, reconciledAt: new Date(), reconcileNote: note.trim() || null })
			.where(and(eq(payouts.id, payoutId), isNull(payouts.reconciledAt)))
			.returning({ id: payouts.id });
		if (!done.length) throw new ReconcileRefused('This payout is already reconciled.');
		await audit(tx, actorId, 'payout.reconciled', payoutId, { issues: state.issues.length });
	});
}
