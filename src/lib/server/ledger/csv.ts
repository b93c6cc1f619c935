// CSV for every export (the Ledger's and the Tracking desk's), and the answer the gift endpoints
// give to a bad query string.
// Cells follow RFC 4180; text that a spreadsheet would run as a formula is neutralised as the
// OWASP "CSV Injection" guidance says, because donor names and references are typed by the public
// or by staff and accounting opens these files in spreadsheets.
import { z } from 'zod';
import type { GiftQuery } from './gifts';

// OWASP "CSV Injection": a cell must not begin with = + - @ tab or carriage return.
const FORMULA_START = /^[=+\-@\t\r]/;
// RFC 4180 §2.6 quotes a field holding a comma, a quote or a line break. A semicolon is quoted as
// well: spreadsheets set to a semicolon separator would otherwise start a new cell inside it.
const NEEDS_QUOTES = /[",;\r\n]/;

export type CsvValue = string | number | null | undefined;

export interface CsvOptions {
	/** Numbers may have fractions; without it a number must be a whole one, as cents are. */
	fractions?: boolean;
}

function cell(value: CsvValue, fractions: boolean): string {
	if (value === null || value === undefined) return '';
	if (typeof value === 'number') {
		if (fractions ? !Number.isFinite(value) : !Number.isSafeInteger(value)) {
			throw new RangeError(`Not a ${fractions ? 'finite' : 'whole'} number: ${value}`);
		}
		return String(value);
	}
	const text = FORMULA_START.test(value) ? `'${value}` : value;
	return NEEDS_QUOTES.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/**
 * One CSV cell. Text gets a leading apostrophe when it would start a formula, then quotes when it
 * needs them (inner quotes doubled). Numbers are our own (cents) and are written as they are, a
 * minus sign included: a spreadsheet reads "-1250" as the number it is, and only text typed by
 * people can carry a formula. A number must be a whole one. Null and undefined are empty.
 */
export function csvCell(value: CsvValue): string {
	return cell(value, false);
}

/**
 * One record, ended by CRLF as RFC 4180 §2.1 has it; every CSV export of the app writes these.
 * With `fractions`, numbers may have fractions (coordinates, metres: the tracking exports).
 */
export function csvRow(
	values: readonly CsvValue[],
	{ fractions = false }: CsvOptions = {}
): string {
	return values.map((value) => cell(value, fractions)).join(',') + '\r\n';
}

/** The gift export's columns, in order. Their names are a contract with accounting: keep them. */
export const GIFT_CSV_COLUMNS = [
	'gift_id',
	'paid_on',
	'source',
	'status',
	'amount_cents',
	'fee_cents',
	'net_cents',
	'refunded_cents',
	'currency',
	'fair_market_value_cents',
	'donor_name',
	'donor_email',
	'method',
	'reference',
	'patient',
	'level',
	'interval',
	'charge_id',
	'invoice_id',
	'payout_id'
] as const;

/** What the export reads from each row of `giftsInBatches`. */
export interface GiftExportRow {
	id: string;
	paidOn: string | null;
	source: string;
	status: string;
	amountCents: number;
	feeCents: number | null;
	netCents: number | null;
	refundedCents: number;
	currency: string;
	fairMarketValueCents: number;
	donorName: string | null;
	donorEmail: string | null;
	method: string | null;
	reference: string | null;
	patientName: string | null;
	levelName: string | null;
	interval: string | null;
	chargeId: string | null;
	invoiceId: string | null;
	payoutId: string | null;
}

export function giftCsvRow(g: GiftExportRow): string {
	return csvRow([
		g.id,
		g.paidOn,
		g.source,
		g.status,
		g.amountCents,
		g.feeCents,
		g.netCents,
		g.refundedCents,
		g.currency,
		g.fairMarketValueCents,
		g.donorName,
		g.donorEmail,
		g.method,
		g.reference,
		g.patientName,
		g.levelName,
		g.interval,
		g.chargeId,
		g.invoiceId,
		g.payoutId
	]);
}

/**
 * An export as a byte stream: the header, then one chunk per batch. The next batch is read only
 * when the reader asks for more (pull), so a slow download holds one batch, not the whole table.
 */
export function csvStream<T>(
	header: readonly string[],
	batches: AsyncIterable<T[]>,
	row: (item: T) => string
): ReadableStream<Uint8Array> {
	const encoder = new TextEncoder();
	const iterator = batches[Symbol.asyncIterator]();
	let headerSent = false;
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			if (!headerSent) {
				headerSent = true;
				controller.enqueue(encoder.encode(csvRow(header)));
				return;
			}
			const next = await iterator.next();
			if (next.done) {
				controller.close();
				return;
			}
			controller.enqueue(encoder.encode(next.value.map(row).join('')));
		},
		async cancel() {
			await iterator.return?.();
		}
	});
}

/** The gifts export (see the README for its columns). */
export const giftsCsvStream = (batches: AsyncIterable<GiftExportRow[]>) =>
	csvStream(GIFT_CSV_COLUMNS, batches, giftCsvRow);

/** `tideward-gifts-2026-05-01.csv`: named after the day of the export (UTC). */
export function giftExportFilename(now = new Date()): string {
	return `tideward-gifts-${now.toISOString().slice(0, 10)}.csv`;
}

/** The filters the export applies: the list's, without its paging and order. */
export function exportFilters(query: GiftQuery): Partial<GiftQuery> {
	const { from, to, patient, level, interval, status, q } = query;
	return { from, to, patient, level, interval, status, q };
}

/**
 * What the gift endpoints and the gifts page say about a query string that does not parse:
 * a message for a person and one per field, e.g. `{ from: 'Enter dates as YYYY-MM-DD.' }`.
 */
export function giftQueryProblem(error: z.ZodError): {
	message: string;
	errors: Record<string, string>;
} {
	const errors: Record<string, string> = {};
	for (const issue of error.issues) errors[String(issue.path[0] ?? 'query')] ??= issue.message;
	const messages = [...new Set(Object.values(errors))];
	return {
		message:
			messages.length === 1 ? messages[0] : `Some filters could not be read: ${messages.join(' ')}`,
		errors
	};
}
