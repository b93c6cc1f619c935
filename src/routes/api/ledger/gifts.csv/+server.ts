import { json } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import {
	exportFilters,
	giftExportFilename,
	giftQueryProblem,
	giftsCsvStream
} from '$lib/server/ledger/csv';
import { giftsInBatches, parseGiftQuery } from '$lib/server/ledger/gifts';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/**
 * Every gift matching the list's filters as CSV, oldest first, streamed batch by batch (columns
 * in README.md, "Ledger exports"). Paging and sorting do not apply.
 */
export const GET: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const parsed = parseGiftQuery(event.url.searchParams);
	if (!parsed.success) {
		return json(giftQueryProblem(parsed.error), {
			status: 400,
			headers: { 'cache-control': 'private, no-store' }
		});
	}
	const body = giftsCsvStream(giftsInBatches(exportFilters(parsed.data)));
	return new Response(body, {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${giftExportFilename()}"`,
			'cache-control': 'private, no-store'
		}
	});
};
