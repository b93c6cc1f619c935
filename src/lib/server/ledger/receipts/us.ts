// United States receipt rules: what a receipt for one gift must say, and how much of the gift the
// supporter may treat as a contribution. Pure: no database, no I/O.
//
// Sources: IRS Publication 1771 (Rev. 3-2016), "Charitable Contributions: Substantiation and
// Disclosure Requirements" — written acknowledgment for a single contribution of $250 or more;
// quid pro quo disclosure for a payment over $75 made partly for goods or services, stating that
// the deductible amount is limited to the payment less the goods' fair market value, with a
// good-faith estimate of that value; insubstantial benefits (Rev. Proc. 90-12, indexed yearly, see
// ./limits) may be disregarded. IRS Publication 526 gives the same rules from the donor's side.

import { limitsFor, type LimitsForYear } from './limits';

/** A single contribution of this much or more needs a written acknowledgment (Pub 1771). */
export const ACKNOWLEDGMENT_THRESHOLD_CENTS = 250_00;
/** A payment over this much that buys goods needs the quid pro quo disclosure (Pub 1771). */
export const DISCLOSURE_THRESHOLD_CENTS = 75_00;

export interface UsReceiptInput {
	/** The whole payment, in US cents. */
	amountCents: number;
	/** Staff's good-faith estimate of the fair market value of the goods given for it (0: none). */
	fairMarketValueCents: number;
	/** What the supporter got in return, e.g. the level's keepsake kit; '' when nothing. */
	goodsDescription: string;
	/** The goods are low-cost articles bearing the organisation's name or logo. */
	tokenItem: boolean;
	paidAt: Date;
	/**
	 * IANA time zone whose calendar decides the day (and so the tax year) of the payment; a gift
	 * made late on 31 December in California is made that year. Default 'UTC'.
	 */
	timeZone?: string;
	/** ISO 4217 code; the US rules are written in dollars, so only USD is accepted. Default USD. */
	currency?: string;
}

export type InsubstantialTest = 'two_percent' | 'token_item';

export interface UsReceiptTerms {
	currency: 'USD';
	amountCents: number;
	fairMarketValueCents: number;
	/** Cleaned: whitespace collapsed, no trailing full stop. */
	goodsDescription: string;
	paidAt: Date;
	timeZone: string;
	/** Something was given in return (a description or a value), insubstantial or not. */
	goodsProvided: boolean;
	/** Which Rev. Proc. 90-12 test lets the goods be disregarded; null when none does (or none given). */
	insubstantial: InsubstantialTest | null;
	/** The payment less the goods' value (never below 0), or the whole payment when disregarded. */
	deductibleCents: number;
	/** Pub 1771: written acknowledgment for a single gift of $250 or more. */
	acknowledgmentRequired: boolean;
	/** Pub 1771: quid pro quo disclosure for a payment over $75 that bought goods not disregarded. */
	disclosureRequired: boolean;
	/** The limits of the payment's year; `estimated` when that year's are not in the table yet. */
	limits: LimitsForYear;
}

function requireCents(name: string, value: number, minimum: number): void {
	if (!Number.isSafeInteger(value) || value < minimum) {
		throw new RangeError(
			`${name} must be a whole number of cents of at least ${minimum}: ${value}`
		);
	}
}

/** Normalised, whitespace collapsed: names and descriptions typed into forms. */
export const cleanText = (text: string): string =>
	text.normalize('NFC').replace(/\s+/gu, ' ').trim();

/** The calendar year of `date` in `timeZone`. */
export function taxYearOf(date: Date, timeZone = 'UTC'): number {
	const year = new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric' })
		.formatToParts(date)
		.find((part) => part.type === 'year')?.value;
	return Number(year);
}

function usDollars(currency: string | undefined): 'USD' {
	const code = (currency ?? 'USD').toUpperCase();
	if (code !== 'USD') {
		throw new RangeError(
			`United States receipts are for gifts in US dollars; this gift is in ${code}. ` +
				'Convert it to USD first or issue it under the rules of its own country.'
		);
	}
	return code;
}

export function usReceiptTerms(input: UsReceiptInput): UsReceiptTerms {
	const currency = usDollars(input.currency);
	const { amountCents, fairMarketValueCents, tokenItem, paidAt } = input;
	requireCents('amountCents', amountCents, 1);
	requireCents('fairMarketValueCents', fairMarketValueCents, 0);
	if (!(paidAt instanceof Date) || Number.isNaN(paidAt.getTime())) {
		throw new RangeError('paidAt must be a valid date');
	}
	const goodsDescription = cleanText(input.goodsDescription).replace(/\.+$/u, '').trimEnd();
	if (fairMarketValueCents > 0 && goodsDescription === '') {
		throw new RangeError('Goods with a fair market value need a description for the receipt');
	}
	const timeZone = input.timeZone ?? 'UTC';
	const limits = limitsFor(taxYearOf(paidAt, timeZone));

	const goodsProvided = goodsDescription !== '' || fairMarketValueCents > 0;
	let insubstantial: InsubstantialTest | null = null;
	if (goodsProvided) {
		// Rev. Proc. 90-12: worth at most 2% of the payment and at most the year's cap. Integer
		// comparison: value ≤ 2% × amount ⇔ 50 × value ≤ amount.
		if (
			50 * fairMarketValueCents <= amountCents &&
			fairMarketValueCents <= limits.twoPercentCapCents
		) {
			insubstantial = 'two_percent';
		} else if (
			// Rev. Proc. 90-12 measures token items by their cost to the organisation; the value staff
			// set is used here, which is at least the cost for goods bought to give away.
			tokenItem &&
			amountCents >= limits.minimumPaymentCents &&
			fairMarketValueCents <= limits.lowCostArticleCents
		) {
			insubstantial = 'token_item';
		}
	}
	const counted = goodsProvided && insubstantial === null;
	const deductibleCents = counted ? Math.max(0, amountCents - fairMarketValueCents) : amountCents;
	return {
		currency,
		amountCents,
		fairMarketValueCents,
		goodsDescription,
		paidAt,
		timeZone,
		goodsProvided,
		insubstantial,
		deductibleCents,
		// Measured on the whole payment: where the goods bring the contribution under $250 the
		// acknowledgment is not strictly needed, but sending it then costs nothing.
		acknowledgmentRequired: amountCents >= ACKNOWLEDGMENT_THRESHOLD_CENTS,
		disclosureRequired: counted && amountCents > DISCLOSURE_THRESHOLD_CENTS,
		limits
	};
}

// ---------------------------------------------------------------------------------------------
// Wording

/** Integer cents as currency, e.g. 10000 → "$100.00"; no floating point on the way. */
export function formatCents(cents: number, currency = 'USD'): string {
	if (!Number.isSafeInteger(cents)) throw new RangeError(`Not a whole number of cents: ${cents}`);
	const format = new Intl.NumberFormat('en-US', { style: 'currency', currency });
	const digits = format.resolvedOptions().maximumFractionDigits ?? 2;
	const units = BigInt(Math.abs(cents));
	const scale = 10n ** BigInt(digits);
	const whole = units / scale;
	const fraction = (units % scale).toString().padStart(digits, '0');
	const decimal = `${cents < 0 ? '-' : ''}${whole}${digits > 0 ? `.${fraction}` : ''}`;
	return format.format(decimal as Intl.StringNumericLiteral);
}

/** Receipt numbers are printed with six digits at least: 123 → "000123". */
export function formatReceiptNumber(number: number): string {
	if (!Number.isSafeInteger(number) || number < 1) {
		throw new RangeError(`Receipt numbers are whole numbers from 1: ${number}`);
	}
	return String(number).padStart(6, '0');
}

/** A day as a US reader writes it, e.g. "March 4, 2026", in the given time zone. */
export function formatReceiptDate(date: Date, timeZone = 'UTC'): string {
	return new Intl.DateTimeFormat('en-US', { dateStyle: 'long', timeZone }).format(date);
}

export type ReceiptStatus = 'issued' | 'corrected' | 'void';

export interface UsReceiptContext {
	organisation: {
		/** Printed as the organisation's name; the display name stands in while it is empty. */
		legalName: string;
		displayName?: string;
		/** The Employer Identification Number; left off while empty. */
		taxId?: string;
	};
	/**
	 * Say that the organisation is a 501(c)(3) public charity. Only when staff have confirmed its
	 * IRS determination: the receipt never claims it by default.
	 */
	publicCharity501c3?: boolean;
	donorName?: string;
	/** The receipt's own number; needed for a void notice. */
	number?: number;
	/** Default 'issued'. */
	status?: ReceiptStatus;
	/** The receipt a corrected receipt replaces. */
	replacesNumber?: number;
	/** When the payment was refunded in full (void notice). */
	refundedAt?: Date;
	/**
	 * A receipt voided by a partial refund keeps its wording, marked void, and names the corrected
	 * receipt that replaces it (needs `number`).
	 */
	voidedBy?: number;
}

export interface UsReceiptWording {
	title: string;
	/** The correction or void notice, shown first; null on an ordinary receipt. */
	notice: string | null;
	/** The organisation's name, EIN and (when confirmed) its 501(c)(3) status, one per line. */
	organisationLines: string[];
	/** The acknowledgment, in order; the goods statement is one of them. */
	paragraphs: string[];
	/** "No goods or services…" or the quid pro quo statement; null on a void notice. */
	goodsStatement: string | null;
	caution: string;
	/** The figures as printed. */
	amount: string;
	fairMarketValue: string | null;
	deductible: string | null;
	paidOn: string;
}

export const NO_GOODS_STATEMENT =
	'No goods or services were provided in exchange for this contribution.';
export const CAUTION =
	'Please keep this receipt with your records. It is not tax advice: a tax adviser can tell you ' +
	'how much of the contribution, if any, you may deduct.';
export const VOID_CAUTION =
	'This notice is not tax advice: a tax adviser can answer questions about your own return.';

export function usReceiptWording(terms: UsReceiptTerms, ctx: UsReceiptContext): UsReceiptWording {
	const status = ctx.status ?? 'issued';
	const organisation =
		cleanText(ctx.organisation.legalName) || cleanText(ctx.organisation.displayName ?? '');
	if (!organisation) throw new RangeError('A receipt needs the organisation’s name');
	const taxId = cleanText(ctx.organisation.taxId ?? '');
	const donor = cleanText(ctx.donorName ?? '');
	const money = (cents: number) => formatCents(cents, terms.currency);
	const amount = money(terms.amountCents);
	const paidOn = formatReceiptDate(terms.paidAt, terms.timeZone);

	const organisationLines = [organisation];
	if (taxId) organisationLines.push(`Employer Identification Number (EIN): ${taxId}`);
	if (ctx.publicCharity501c3) {
		organisationLines.push(
			`${organisation} is a public charity exempt from federal income tax under section 501(c)(3) of the Internal Revenue Code.`
		);
	}

	if (status === 'void') {
		if (ctx.number === undefined) throw new RangeError('A void notice needs the receipt number');
		const number = formatReceiptNumber(ctx.number);
		const from = donor ? ` from ${donor}` : '';
		const refunded = ctx.refundedAt
			? `was refunded in full on ${formatReceiptDate(ctx.refundedAt, terms.timeZone)}`
			: 'was refunded in full';
		return {
			title: 'Notice of void receipt',
			notice: `Receipt No. ${number} is void.`,
			organisationLines,
			paragraphs: [
				`The payment of ${amount} received${from} on ${paidOn} ${refunded}, so receipt No. ${number} no longer acknowledges a contribution.`,
				`Please keep this notice with your records in place of receipt No. ${number}.`
			],
			goodsStatement: null,
			caution: VOID_CAUTION,
			amount,
			fairMarketValue: null,
			deductible: null,
			paidOn
		};
	}

	let notice: string | null = null;
	if (status === 'corrected') {
		if (ctx.replacesNumber === undefined) {
			throw new RangeError('A corrected receipt needs the number of the receipt it replaces');
		}
		notice = `This corrects receipt No. ${formatReceiptNumber(ctx.replacesNumber)}, which is void.`;
	}

	const counted = terms.goodsProvided && terms.insubstantial === null;
	const fairMarketValue = counted ? money(terms.fairMarketValueCents) : null;
	const deductible = counted ? money(terms.deductibleCents) : null;
	const goodsStatement = counted
		? `In exchange for this contribution, ${organisation} provided: ${terms.goodsDescription}. ` +
			`Our good-faith estimate of the fair market value of these goods or services is ${fairMarketValue}. ` +
			`The amount deductible for federal income tax purposes is limited to the excess of the ` +
			`payment of ${amount} over that value: ${deductible}.`
		: NO_GOODS_STATEMENT;
	const acknowledgment = donor
		? `${organisation} gratefully acknowledges a contribution of ${amount} from ${donor}, received on ${paidOn}.`
		: `${organisation} gratefully acknowledges a contribution of ${amount}, received on ${paidOn}.`;

	if (ctx.voidedBy !== undefined) {
		if (ctx.number === undefined) throw new RangeError('A voided receipt needs its own number');
		notice = `Receipt No. ${formatReceiptNumber(ctx.number)} is void: receipt No. ${formatReceiptNumber(ctx.voidedBy)} replaces it.`;
	}
	const title = status === 'corrected' ? 'Corrected contribution receipt' : 'Contribution receipt';
	return {
		title: ctx.voidedBy !== undefined ? `Void: ${title.toLowerCase()}` : title,
		notice,
		organisationLines,
		paragraphs: [acknowledgment, goodsStatement],
		goodsStatement,
		caution: CAUTION,
		amount,
		fairMarketValue,
		deductible,
		paidOn
	};
}

/** The wording as plain text (for the e-mail that carries the receipt). */
export function receiptPlainText(wording: UsReceiptWording): string {
	return [
		wording.title,
		wording.notice,
		wording.organisationLines.join('\n'),
		...wording.paragraphs,
		wording.caution
	]
		.filter((part): part is string => Boolean(part))
		.join('\n\n');
}
