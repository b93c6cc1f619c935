import { json } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { closeCsv, monthlyClose, parseCloseYear } from '$lib/server/ledger/close';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/** The monthly close of `?year=` (CLOSE_CSV_COLUMNS): per month and level, then the year. */
export const GET: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const parsed = parseCloseYear(event.url.searchParams.get('year'));
	if (!parsed.ok) {
		return json(
			{ message: parsed.message, errors: { year: parsed.message } },
			{ status: 400, headers: { 'cache-control': 'private, no-store' } }
		);
	}
	const close = await monthlyClose(parsed.year);
	return new Response(closeCsv(close), {
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="tideward-close-${parsed.year}.csv"`,
			'cache-control': 'private, no-store'
		}
	});
};
