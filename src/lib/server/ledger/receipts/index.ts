// Tax-receipt rules, one module per country, chosen by the organisation's country. The United
// States is the only one so far; a new country adds its module here with the same shape.

import { limitsFor } from './limits';
import { usReceiptTerms, usReceiptWording, receiptPlainText } from './us';

export interface ReceiptRules {
	countryCode: 'US';
	terms: typeof usReceiptTerms;
	wording: typeof usReceiptWording;
	plainText: typeof receiptPlainText;
	limitsFor: typeof limitsFor;
}

const US: ReceiptRules = Object.freeze({
	countryCode: 'US',
	terms: usReceiptTerms,
	wording: usReceiptWording,
	plainText: receiptPlainText,
	limitsFor
});

export const SUPPORTED_RECEIPT_COUNTRIES = ['US'] as const;

/** The receipt rules of a country (ISO 3166-1 alpha-2 code, any case). */
export function receiptRules(countryCode: string): ReceiptRules {
	const code = countryCode.trim().toUpperCase();
	if (code === 'US') return US;
	throw new Error(
		`No tax-receipt rules for country "${countryCode}": Tideward issues receipts under the rules ` +
			`of ${SUPPORTED_RECEIPT_COUNTRIES.join(', ')} only.`
	);
}

export {
	ACKNOWLEDGMENT_THRESHOLD_CENTS,
	CAUTION,
	DISCLOSURE_THRESHOLD_CENTS,
	NO_GOODS_STATEMENT,
	VOID_CAUTION,
	cleanText,
	formatCents,
	formatReceiptDate,
	formatReceiptNumber,
	receiptPlainText,
	taxYearOf,
	usReceiptTerms,
	usReceiptWording
} from './us';
export type {
	InsubstantialTest,
	ReceiptStatus,
	UsReceiptContext,
	UsReceiptInput,
	UsReceiptTerms,
	UsReceiptWording
} from './us';
export { INSUBSTANTIAL_BENEFIT_LIMITS, limitsFor } from './limits';
export type { InsubstantialBenefitLimits, LimitsForYear } from './limits';
