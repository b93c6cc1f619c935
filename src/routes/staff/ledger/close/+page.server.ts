import { error } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import {
	firstGiftYear,
	MAX_CLOSE_YEAR,
	MIN_CLOSE_YEAR,
	monthlyClose,
	parseCloseYear,
	type CloseFigures
} from '$lib/server/ledger/close';
import { formatCents } from '$lib/server/ledger/receipts/us';
import { MONTHS } from '$lib/format';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

/** The monthly close of `?year=` (the current year when absent). */
export const load = (async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const parsed = parseCloseYear(event.url.searchParams.get('year'));
	if (!parsed.ok) error(400, parsed.message);
	const thisYear = new Date().getUTCFullYear();
	const [close, first] = await Promise.all([monthlyClose(parsed.year), firstGiftYear()]);
	// The selector offers every year from the first gift to this one (and the year shown).
	const from = Math.max(MIN_CLOSE_YEAR, Math.min(first ?? thisYear, thisYear, parsed.year));
	const to = Math.min(MAX_CLOSE_YEAR, Math.max(thisYear, parsed.year));
	const years: number[] = [];
	for (let y = to; y >= from; y--) years.push(y);

	const code = close.currency.toUpperCase();
	const show = (f: CloseFigures) => ({
		...f,
		gross: formatCents(f.grossCents, code),
		refunds: formatCents(f.refundsCents, code),
		disputes: formatCents(f.disputesCents, code),
		fees: formatCents(f.feesCents, code),
		net: formatCents(f.netCents, code)
	});
	return {
		year: close.year,
		years,
		currency: code,
		otherCurrencyGifts: close.otherCurrencyGifts,
		months: close.months.map((m, i) => ({
			month: m.month,
			label: `${MONTHS[i]} ${close.year}`,
			rows: m.rows.map((r) => ({ levelId: r.levelId, level: r.level, ...show(r) })),
			total: show(m.total)
		})),
		yearRows: close.yearRows.map((r) => ({ levelId: r.levelId, level: r.level, ...show(r) })),
		total: show(close.total)
	};
}) satisfies PageServerLoad;
