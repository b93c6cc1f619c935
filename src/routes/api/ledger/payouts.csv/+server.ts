import { requireRoles } from '$lib/server/auth/roles';
import { payoutLinesInBatches, payoutsCsvStream } from '$lib/server/ledger/close';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/**
 * Every payout line with its payout's columns (PAYOUT_CSV_COLUMNS), oldest payout first, streamed
 * batch by batch. A payout without lines (not paid yet, or failed) has no row.
 */
export const GET: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const day = new Date().toISOString().slice(0, 10);
	return new Response(payoutsCsvStream(payoutLinesInBatches()), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="tideward-payouts-${day}.csv"`,
			'cache-control': 'private, no-store'
		}
	});
};
