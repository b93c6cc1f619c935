import { requireRoles } from '$lib/server/auth/roles';
import { listPayouts } from '$lib/server/ledger/close';
import { formatCents } from '$lib/server/ledger/receipts/us';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

const day = (date: Date | null) => (date ? date.toISOString().slice(0, 10) : null);

/** Every payout from the processor, newest first, with where its reconciliation stands. */
export const load = (async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const rows = await listPayouts();
	return {
		payouts: rows.map((p) => ({
			id: p.id,
			status: p.status,
			amountCents: p.amountCents,
			amount: formatCents(p.amountCents, p.currency.toUpperCase()),
			arrivalDate: day(p.arrivalDate),
			reconciled: p.reconciledAt
				? { by: p.reconciledByName ?? 'a former staff member', on: day(p.reconciledAt) }
				: null,
			openDifferences: p.openDifferences
		}))
	};
}) satisfies PageServerLoad;
