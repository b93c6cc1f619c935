// Closing the books: the payouts still to reconcile, every payout line as CSV for accounting, and
// the monthly close (gifts, refunds, disputes and fees per month and level). Amounts are integer
// cents; sums are read from PostgreSQL as bigint text and checked before they become numbers.
import { and, asc, desc, eq, gte, inArray, lt, sql, type SQL } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import { db, type Executor } from '../db';
import { adoptionLevels, adoptions, gifts, payoutLines, payouts, users } from '../db/schema';
import { getOrganisationSettings } from '../settings';
import { csvRow, csvStream } from './csv';
import { payoutReconciliation } from './reconcile';

// ───────────────────────────── payouts ─────────────────────────────

const reconciler = alias(users, 'reconciler');
// A payout not yet on its way has no arrival date: it sorts by when we first heard of it.
const payoutAt = sql<Date>`COALESCE(${payouts.arrivalDate}, ${payouts.createdAt})`;

export interface PayoutListRow {
	id: string;
	status: string;
	amountCents: number;
	currency: string;
	arrivalDate: Date | null;
	reconciledAt: Date | null;
	reconciledByName: string | null;
	/** Differences without a note; counted for payouts still to reconcile, null once reconciled. */
	openDifferences: number | null;
}

/**
 * Every payout, newest first. Differences are counted (as the payout page lists them) only for
 * payouts still to reconcile: a reconciled payout had a note on each difference when it was
 * marked, and counting again would read every line of every payout ever made.
 */
export async function listPayouts(executor: Executor = db()): Promise<PayoutListRow[]> {
	const rows = await executor
		.select({
			id: payouts.id,
			status: payouts.status,
			amountCents: payouts.amountCents,
			currency: payouts.currency,
			arrivalDate: payouts.arrivalDate,
			reconciledAt: payouts.reconciledAt,
			reconciledByName: reconciler.name
		})
		.from(payouts)
		.leftJoin(reconciler, eq(reconciler.id, payouts.reconciledBy))
		.orderBy(desc(payoutAt), desc(payouts.id));
	const result: PayoutListRow[] = [];
	for (const row of rows) {
		let openDifferences: number | null = null;
		if (!row.reconciledAt) {
			openDifferences = (await payoutReconciliation(row.id, executor))?.open ?? 0;
		}
		result.push({ ...row, openDifferences });
	}
	return result;
}

/** Who marked a payout reconciled (the person's name and e-mail), or null. */
export async function reconcilerOf(userId: string | null, executor: Executor = db()) {
	if (!userId) return null;
	const [person] = await executor
		.select({ name: users.name, email: users.email })
		.from(users)
		.where(eq(users.id, userId));
	return person ?? null;
}

/** The supporter address behind each gift (the donor's for a manual gift), for links. */
export async function giftAddresses(giftIds: string[], executor: Executor = db()) {
	if (giftIds.length === 0) return new Map<string, string>();
	const rows = await executor
		.select({
			id: gifts.id,
			email: sql<string | null>`COALESCE(${gifts.donorEmail}, ${adoptions.supporterEmail})`
		})
		.from(gifts)
		.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.where(inArray(gifts.id, [...new Set(giftIds)]));
	return new Map(rows.filter((r) => r.email).map((r) => [r.id, r.email!]));
}

/** The payout export's columns, in order. Their names are a contract with accounting: keep them. */
export const PAYOUT_CSV_COLUMNS = [
	'payout_id',
	'payout_status',
	'payout_amount_cents',
	'arrival_date',
	'reconciled_at',
	'reconciled_by',
	'line_id',
	'line_type',
	'reporting_category',
	'amount_cents',
	'fee_cents',
	'net_cents',
	'currency',
	'source_id',
	'charge_id',
	'gift_id'
] as const;

export interface PayoutExportRow {
	payoutId: string;
	payoutStatus: string;
	payoutAmountCents: number;
	arrivalDate: string | null;
	reconciledAt: string | null;
	reconciledBy: string | null;
	lineId: string;
	lineType: string;
	reportingCategory: string;
	amountCents: number;
	feeCents: number;
	netCents: number;
	currency: string;
	sourceId: string | null;
	chargeId: string | null;
	giftId: string | null;
}

/**
 * Every payout line with its payout's columns, oldest payout first, in batches. The cursor is
 * compared in SQL on the timestamps' text so that microseconds survive between batches.
 */
export async function* payoutLinesInBatches(
	batchSize = 1000,
	executor: Executor = db()
): AsyncGenerator<PayoutExportRow[]> {
	let after: { payoutAt: string; payoutId: string; lineAt: string; lineId: string } | null = null;
	for (;;) {
		const cursor: SQL | undefined = after
			? sql`(${payoutAt}, ${payouts.id}, ${payoutLines.createdAt}, ${payoutLines.id}) > (${after.payoutAt}::timestamptz, ${after.payoutId}, ${after.lineAt}::timestamptz, ${after.lineId})`
			: undefined;
		const page: (PayoutExportRow & { cursorPayoutAt: string; cursorLineAt: string })[] =
			await executor
				.select({
					payoutId: payouts.id,
					payoutStatus: payouts.status,
					payoutAmountCents: payouts.amountCents,
					arrivalDate: sql<
						string | null
					>`to_char(${payouts.arrivalDate} AT TIME ZONE 'UTC', 'YYYY-MM-DD')`,
					reconciledAt: sql<
						string | null
					>`to_char(${payouts.reconciledAt} AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS"Z"')`,
					reconciledBy: reconciler.name,
					lineId: payoutLines.id,
					lineType: payoutLines.type,
					reportingCategory: payoutLines.reportingCategory,
					amountCents: payoutLines.amountCents,
					feeCents: payoutLines.feeCents,
					netCents: payoutLines.netCents,
					currency: payoutLines.currency,
					sourceId: payoutLines.sourceId,
					chargeId: payoutLines.chargeId,
					giftId: payoutLines.giftId,
					cursorPayoutAt: sql<string>`${payoutAt}::text`,
					cursorLineAt: sql<string>`${payoutLines.createdAt}::text`
				})
				.from(payoutLines)
				.innerJoin(payouts, eq(payouts.id, payoutLines.payoutId))
				.leftJoin(reconciler, eq(reconciler.id, payouts.reconciledBy))
				.where(cursor)
				.orderBy(asc(payoutAt), asc(payouts.id), asc(payoutLines.createdAt), asc(payoutLines.id))
				.limit(batchSize);
		if (page.length === 0) return;
		yield page.map(({ cursorPayoutAt: _p, cursorLineAt: _l, ...row }) => row);
		if (page.length < batchSize) return;
		const last = page[page.length - 1];
		after = {
			payoutAt: last.cursorPayoutAt,
			payoutId: last.payoutId,
			lineAt: last.cursorLineAt,
			lineId: last.lineId
		};
	}
}

export function payoutCsvRow(r: PayoutExportRow): string {
	return csvRow([
		r.payoutId,
		r.payoutStatus,
		r.payoutAmountCents,
		r.arrivalDate,
		r.reconciledAt,
		r.reconciledBy,
		r.lineId,
		r.lineType,
		r.reportingCategory,
		r.amountCents,
		r.feeCents,
		r.netCents,
		r.currency,
		r.sourceId,
		r.chargeId,
		r.giftId
	]);
}

/** The payouts export: one row per payout line (see the README for its columns). */
export const payoutsCsvStream = (batches: AsyncIterable<PayoutExportRow[]>) =>
	csvStream(PAYOUT_CSV_COLUMNS, batches, payoutCsvRow);

// ─────────────────────────── monthly close ───────────────────────────

export const MIN_CLOSE_YEAR = 2000;
export const MAX_CLOSE_YEAR = 2100;
/** The label of gifts recorded by hand (no adoption, so no level). */
export const MANUAL_GIFTS = 'Manual gifts';
/** The label of total rows, in the page and in the CSV. */
export const ALL_LEVELS = 'All levels';

export interface CloseFigures {
	gifts: number;
	grossCents: number;
	refundsCents: number;
	disputesCents: number;
	feesCents: number;
	/** gross − refunds − disputes − fees */
	netCents: number;
}

export interface CloseRow extends CloseFigures {
	/** The level's id; null for manual gifts. */
	levelId: string | null;
	level: string;
}

export interface CloseMonth {
	/** `2026-01` */
	month: string;
	rows: CloseRow[];
	total: CloseFigures;
}

export interface MonthlyClose {
	year: number;
	currency: string;
	/** Every month of the year, January first, each with a row per level that had gifts that year. */
	months: CloseMonth[];
	/** The year per level, and in all. */
	yearRows: CloseRow[];
	total: CloseFigures;
	/** Paid gifts that year in another currency: not in these sums. */
	otherCurrencyGifts: number;
}

/** Reads `?year=`: four digits from 2000 to 2100; empty means the current year (UTC). */
export function parseCloseYear(
	raw: string | null,
	now = new Date()
): { ok: true; year: number } | { ok: false; message: string } {
	const text = raw?.trim() ?? '';
	if (text === '') return { ok: true, year: now.getUTCFullYear() };
	const message = `Enter the year as four digits, from ${MIN_CLOSE_YEAR} to ${MAX_CLOSE_YEAR}.`;
	if (!/^\d{4}$/.test(text)) return { ok: false, message };
	const year = Number(text);
	if (year < MIN_CLOSE_YEAR || year > MAX_CLOSE_YEAR) return { ok: false, message };
	return { ok: true, year };
}

const ZERO: CloseFigures = {
	gifts: 0,
	grossCents: 0,
	refundsCents: 0,
	disputesCents: 0,
	feesCents: 0,
	netCents: 0
};

function add(a: CloseFigures, b: CloseFigures): CloseFigures {
	return {
		gifts: a.gifts + b.gifts,
		grossCents: a.grossCents + b.grossCents,
		refundsCents: a.refundsCents + b.refundsCents,
		disputesCents: a.disputesCents + b.disputesCents,
		feesCents: a.feesCents + b.feesCents,
		netCents: a.netCents + b.netCents
	};
}

function cents(value: string | number | null): number {
	const n = Number(value ?? 0);
	if (!Number.isSafeInteger(n)) throw new RangeError(`Not a whole number of cents: ${value}`);
	return n;
}

/**
 * The monthly close of one year (UTC months), in the organisation's currency: for each month and
 * each level (and manual gifts), the paid gifts (every gift that was paid: refunded and disputed
 * ones included, failed payments not), their gross, refunds, disputes and processor fees, and the
 * net. A disputed gift counts what was still in dispute: its amount less what had been refunded
 * before (a charge can only be disputed for what was not refunded), so that nothing is taken off
 * twice.
 */
export async function monthlyClose(
	year: number,
	options: { currency?: string; executor?: Executor } = {}
): Promise<MonthlyClose> {
	if (!Number.isInteger(year) || year < MIN_CLOSE_YEAR || year > MAX_CLOSE_YEAR) {
		throw new RangeError(`The year must be from ${MIN_CLOSE_YEAR} to ${MAX_CLOSE_YEAR}.`);
	}
	const executor = options.executor ?? db();
	const currency = (options.currency ?? (await getOrganisationSettings()).currency).toLowerCase();
	const start = new Date(Date.UTC(year, 0, 1));
	const end = new Date(Date.UTC(year + 1, 0, 1));
	const inYear = and(
		gte(gifts.paidAt, start),
		lt(gifts.paidAt, end),
		sql`${gifts.status} <> 'failed'`
	);
	const month = sql<number>`extract(month FROM ${gifts.paidAt} AT TIME ZONE 'UTC')::int`;
	const disputed = sql`CASE WHEN ${gifts.status} = 'disputed' THEN GREATEST(${gifts.amountCents} - ${gifts.refundedCents}, 0) ELSE 0 END`;

	const [sums, levels, others] = await Promise.all([
		executor
			.select({
				month,
				levelId: adoptions.levelId,
				gifts: sql<number>`count(*)::int`,
				grossCents: sql<string>`sum(${gifts.amountCents})::bigint`,
				refundsCents: sql<string>`sum(${gifts.refundedCents})::bigint`,
				disputesCents: sql<string>`sum(${disputed})::bigint`,
				feesCents: sql<string>`sum(COALESCE(${gifts.feeCents}, 0))::bigint`
			})
			.from(gifts)
			.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
			.where(and(inYear, sql`lower(${gifts.currency}) = ${currency}`))
			.groupBy(month, adoptions.levelId),
		executor
			.select({ id: adoptionLevels.id, name: adoptionLevels.name })
			.from(adoptionLevels)
			.orderBy(asc(adoptionLevels.position), asc(adoptionLevels.name), asc(adoptionLevels.id)),
		executor
			.select({ n: sql<number>`count(*)::int` })
			.from(gifts)
			.where(and(inYear, sql`lower(${gifts.currency}) <> ${currency}`))
	]);

	// Levels in the order staff set them, then manual gifts; only those with gifts this year.
	const used = new Set(sums.map((s) => s.levelId));
	const columns: { levelId: string | null; level: string }[] = levels
		.filter((l) => used.has(l.id))
		.map((l) => ({ levelId: l.id, level: l.name }));
	if (used.has(null)) columns.push({ levelId: null, level: MANUAL_GIFTS });

	const figures = new Map<string, CloseFigures>();
	for (const s of sums) {
		const grossCents = cents(s.grossCents);
		const refundsCents = cents(s.refundsCents);
		const disputesCents = cents(s.disputesCents);
		const feesCents = cents(s.feesCents);
		figures.set(`${s.month}:${s.levelId}`, {
			gifts: s.gifts,
			grossCents,
			refundsCents,
			disputesCents,
			feesCents,
			netCents: grossCents - refundsCents - disputesCents - feesCents
		});
	}

	const months: CloseMonth[] = [];
	const byLevel = new Map<string | null, CloseFigures>(columns.map((c) => [c.levelId, ZERO]));
	let total = ZERO;
	for (let m = 1; m <= 12; m++) {
		const rows = columns.map((c) => ({
			...c,
			...(figures.get(`${m}:${c.levelId}`) ?? ZERO)
		}));
		const monthTotal = rows.reduce<CloseFigures>((sum, r) => add(sum, r), ZERO);
		for (const r of rows) byLevel.set(r.levelId, add(byLevel.get(r.levelId)!, r));
		total = add(total, monthTotal);
		months.push({ month: `${year}-${String(m).padStart(2, '0')}`, rows, total: monthTotal });
	}
	return {
		year,
		currency,
		months,
		yearRows: columns.map((c) => ({ ...c, ...byLevel.get(c.levelId)! })),
		total,
		otherCurrencyGifts: others[0]?.n ?? 0
	};
}

/** The year (UTC) of the first paid gift, or null when there is none. */
export async function firstGiftYear(executor: Executor = db()): Promise<number | null> {
	const [row] = await executor
		.select({
			year: sql<number | null>`extract(year FROM min(${gifts.paidAt}) AT TIME ZONE 'UTC')::int`
		})
		.from(gifts);
	return row?.year ?? null;
}

/** The close export's columns, in order. Their names are a contract with accounting: keep them. */
export const CLOSE_CSV_COLUMNS = [
	'month',
	'level',
	'gifts',
	'gross_cents',
	'refunds_cents',
	'disputes_cents',
	'fees_cents',
	'net_cents'
] as const;

const figureCells = (f: CloseFigures) => [
	f.gifts,
	f.grossCents,
	f.refundsCents,
	f.disputesCents,
	f.feesCents,
	f.netCents
];

/**
 * The close as CSV: per month, a row per level then the month's total (level `All levels`); then
 * the year (month `2026`) per level and in all. Summing a column therefore counts totals too:
 * filter on the level to add up.
 */
export function closeCsv(close: MonthlyClose): string {
	let text = csvRow(CLOSE_CSV_COLUMNS);
	for (const m of close.months) {
		for (const r of m.rows) text += csvRow([m.month, r.level, ...figureCells(r)]);
		text += csvRow([m.month, ALL_LEVELS, ...figureCells(m.total)]);
	}
	const year = String(close.year);
	for (const r of close.yearRows) text += csvRow([year, r.level, ...figureCells(r)]);
	text += csvRow([year, ALL_LEVELS, ...figureCells(close.total)]);
	return text;
}
