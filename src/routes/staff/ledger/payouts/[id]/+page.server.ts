import { error, fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import { giftAddresses, reconcilerOf } from '$lib/server/ledger/close';
import { formatCents } from '$lib/server/ledger/receipts/us';
import {
	markReconciled,
	noteIssue,
	payoutReconciliation,
	ReconcileRefused
} from '$lib/server/ledger/reconcile';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.ledger.roles;

const noteForm = z.object({
	issueKey: z
		.string({ error: 'Choose a difference from the list.' })
		.trim()
		.min(1, 'Choose a difference.'),
	note: z
		.string({ error: 'Write a note.' })
		.trim()
		.min(1, 'Write a note on what you found.')
		.max(1000, 'Keep the note under 1,000 characters.')
});

const reconcileForm = z.object({
	note: z
		.string()
		.trim()
		.max(1000, 'Keep the note under 1,000 characters.')
		.optional()
		.transform((v) => v ?? '')
});

const day = (date: Date | null) => (date ? date.toISOString().slice(0, 10) : null);

/** One payout: its sums, its lines matched to gifts, its differences and who reconciled it. */
export const load = (async (event) => {
	requireRoles(event, ...area);
	const state = await payoutReconciliation(event.params.id);
	if (!state) error(404, 'The Ledger knows no payout with this id.');
	const { payout, lines, summary, issues } = state;
	const [addresses, reconciledBy] = await Promise.all([
		giftAddresses(lines.map((l) => l.giftId).filter((g): g is string => !!g)),
		reconcilerOf(payout.reconciledBy)
	]);
	const code = payout.currency.toUpperCase();
	const money = (cents: number, currency = code) => formatCents(cents, currency.toUpperCase());
	return {
		payout: {
			id: payout.id,
			status: payout.status,
			amount: money(payout.amountCents),
			arrivalDate: day(payout.arrivalDate),
			failureMessage: payout.failureMessage,
			reconciled: payout.reconciledAt
				? {
						by: reconciledBy?.name ?? 'a former staff member',
						at: payout.reconciledAt.toISOString().slice(0, 16).replace('T', ' ') + ' UTC',
						note: payout.reconcileNote
					}
				: null
		},
		summary: {
			...summary,
			differenceCents: summary.netCents - summary.payoutCents,
			gross: money(summary.grossCents),
			refunds: money(summary.refundCents),
			disputes: money(summary.disputeCents),
			other: money(summary.otherCents),
			fees: money(summary.feeCents),
			net: money(summary.netCents),
			payout: money(summary.payoutCents),
			difference: money(summary.netCents - summary.payoutCents)
		},
		balanced: state.balanced,
		lines: lines.map((l) => ({
			id: l.id,
			type: l.type,
			reportingCategory: l.reportingCategory,
			sourceId: l.sourceId,
			chargeId: l.chargeId,
			amount: money(l.amountCents, l.currency),
			fee: money(l.feeCents, l.currency),
			net: money(l.netCents, l.currency),
			giftId: l.giftId,
			supporterEmail: l.giftId ? (addresses.get(l.giftId) ?? null) : null
		})),
		issues,
		open: state.open,
		canReconcile: payout.status === 'paid' && !payout.reconciledAt
	};
}) satisfies PageServerLoad;

/** A refusal by the rules becomes a 400 for the form that asked; anything else is a bug. */
function refused(
	form: 'note' | 'reconcile',
	err: unknown,
	issueKey: string | null,
	values: Record<string, string>
) {
	if (err instanceof ReconcileRefused) {
		return fail(400, { form, issueKey, message: err.message, values });
	}
	throw err;
}

export const actions = {
	note: async (event) => {
		const user = requireRoles(event, ...area);
		const data = await event.request.formData();
		const parsed = parseForm(noteForm, data);
		if (!parsed.ok) {
			return fail(400, {
				form: 'note' as const,
				issueKey: parsed.values.issueKey ?? null,
				message: Object.values(parsed.errors)[0],
				errors: parsed.errors,
				values: parsed.values
			});
		}
		const { issueKey, note } = parsed.data;
		try {
			await noteIssue(event.params.id, issueKey, note, user.id);
		} catch (err) {
			return refused('note', err, issueKey, parsed.values);
		}
		return { form: 'note' as const, issueKey, done: 'Note saved.' };
	},

	reconcile: async (event) => {
		const user = requireRoles(event, ...area);
		const parsed = parseForm(reconcileForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, {
				form: 'reconcile' as const,
				issueKey: null,
				message: Object.values(parsed.errors)[0],
				errors: parsed.errors,
				values: parsed.values
			});
		}
		try {
			await markReconciled(event.params.id, user.id, parsed.data.note);
		} catch (err) {
			return refused('reconcile', err, null, parsed.values);
		}
		return { form: 'reconcile' as const, issueKey: null, done: 'Payout marked reconciled.' };
	}
} satisfies Actions;
