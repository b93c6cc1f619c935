import { json } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { giftQueryProblem } from '$lib/server/ledger/csv';
import { listGifts, parseGiftQuery } from '$lib/server/ledger/gifts';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

// Donor names and e-mail addresses: never kept by a shared cache or on the reader's disk.
const PRIVATE = { 'cache-control': 'private, no-store' };

/** One page of gifts for the Ledger's table: the rows, how many match, and their totals. */
export const GET: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const parsed = parseGiftQuery(event.url.searchParams);
	if (!parsed.success) {
		return json(giftQueryProblem(parsed.error), { status: 400, headers: PRIVATE });
	}
	return json(await listGifts(parsed.data), { headers: PRIVATE });
};
