import { describe, expect, it } from 'vitest';
import {
	CAUTION,
	INSUBSTANTIAL_BENEFIT_LIMITS,
	NO_GOODS_STATEMENT,
	VOID_CAUTION,
	formatCents,
	formatReceiptNumber,
	limitsFor,
	receiptPlainText,
	receiptRules,
	usReceiptTerms,
	usReceiptWording,
	type UsReceiptContext,
	type UsReceiptInput
} from './index';

const in2025 = new Date('2025-06-15T15:00:00Z');
const in2026 = new Date('2026-03-04T15:00:00Z');

function gift(overrides: Partial<UsReceiptInput> = {}): UsReceiptInput {
	return {
		amountCents: 100_00,
		fairMarketValueCents: 0,
		goodsDescription: '',
		tokenItem: false,
		paidAt: in2026,
		...overrides
	};
}

const ctx: UsReceiptContext = {
	organisation: {
		legalName: 'Saltmarsh Sea Turtle Hospital, Inc.',
		displayName: 'Saltmarsh',
		taxId: '00-0000000'
	},
	donorName: 'Ana Example'
};

const allText = (w: ReturnType<typeof usReceiptWording>) => receiptPlainText(w);

describe('the IRS worked example', () => {
	// IRS Publication 1771, "Quid Pro Quo Contributions" (also Publication 526, "Contributions
	// From Which You Benefit"): $100 paid for a concert ticket worth $40 → $60 deductible, and
	// the payment is over $75, so the disclosure statement is required.
	const terms = usReceiptTerms(
		gift({ amountCents: 100_00, fairMarketValueCents: 40_00, goodsDescription: 'a concert ticket' })
	);

	it('limits the deduction to the payment less the benefit and requires the disclosure', () => {
		expect(terms.goodsProvided).toBe(true);
		expect(terms.insubstantial).toBeNull();
		expect(terms.deductibleCents).toBe(60_00);
		expect(terms.disclosureRequired).toBe(true);
		expect(terms.acknowledgmentRequired).toBe(false);
	});

	it('says so on the receipt, with the good-faith estimate and the deductible amount', () => {
		const wording = usReceiptWording(terms, ctx);
		expect(wording.goodsStatement).toBe(
			'In exchange for this contribution, Saltmarsh Sea Turtle Hospital, Inc. provided: a concert ticket. ' +
				'Our good-faith estimate of the fair market value of these goods or services is $40.00. ' +
				'The amount deductible for federal income tax purposes is limited to the excess of the payment ' +
				'of $100.00 over that value: $60.00.'
		);
		expect(wording.paragraphs).toContain(wording.goodsStatement);
		expect(allText(wording)).not.toContain(NO_GOODS_STATEMENT);
		expect([wording.amount, wording.fairMarketValue, wording.deductible]).toEqual([
			'$100.00',
			'$40.00',
			'$60.00'
		]);
	});
});

describe('written acknowledgment at $250 (IRS Publication 1771: single contribution of $250 or more)', () => {
	it.each([
		[249_99, false],
		[250_00, true],
		[250_01, true]
	])('%i cents → %s', (amountCents, required) => {
		expect(usReceiptTerms(gift({ amountCents })).acknowledgmentRequired).toBe(required);
	});
});

describe('quid pro quo disclosure over $75 (IRS Publication 1771: payment in excess of $75)', () => {
	it.each([
		[74_99, false],
		[75_00, false],
		[75_01, true]
	])('%i cents with a $20 item → %s', (amountCents, required) => {
		const terms = usReceiptTerms(
			gift({ amountCents, fairMarketValueCents: 20_00, goodsDescription: 'a field guide' })
		);
		expect(terms.insubstantial).toBeNull();
		expect(terms.disclosureRequired).toBe(required);
		expect(terms.deductibleCents).toBe(amountCents - 20_00);
		// The receipt describes the goods whenever they count, required or not.
		expect(usReceiptWording(terms, ctx).goodsStatement).toContain('limited to the excess');
	});

	it('is not required over $75 when nothing was given in return', () => {
		const terms = usReceiptTerms(gift({ amountCents: 500_00 }));
		expect(terms.goodsProvided).toBe(false);
		expect(terms.disclosureRequired).toBe(false);
		expect(terms.deductibleCents).toBe(500_00);
		expect(usReceiptWording(terms, ctx).goodsStatement).toBe(NO_GOODS_STATEMENT);
	});
});

describe('the yearly limits (Rev. Proc. 90-12 as indexed)', () => {
	it('holds the published figures', () => {
		// Rev. Proc. 2024-40 (2025): $13.60 low-cost article, $136 cap, $68 minimum payment.
		expect(limitsFor(2025)).toMatchObject({
			year: 2025,
			lowCostArticleCents: 13_60,
			twoPercentCapCents: 136_00,
			minimumPaymentCents: 68_00,
			estimated: false
		});
		// Rev. Proc. 2025-32 (2026): $13.90, $139, $69.50.
		expect(limitsFor(2026)).toMatchObject({
			year: 2026,
			lowCostArticleCents: 13_90,
			twoPercentCapCents: 139_00,
			minimumPaymentCents: 69_50,
			estimated: false
		});
	});

	it('stands in with the latest earlier year, or the earliest row, marked estimated', () => {
		expect(limitsFor(2027)).toMatchObject({ year: 2026, estimated: true });
		expect(limitsFor(2040)).toMatchObject({ year: 2026, estimated: true });
		expect(limitsFor(2024)).toMatchObject({ year: 2025, estimated: true });
		expect(INSUBSTANTIAL_BENEFIT_LIMITS.map((row) => row.year)).toEqual([2025, 2026]);
		const terms = usReceiptTerms(gift({ paidAt: new Date('2027-02-01T12:00:00Z') }));
		expect(terms.limits).toMatchObject({ year: 2026, estimated: true });
		expect(usReceiptTerms(gift({ paidAt: in2026 })).limits.estimated).toBe(false);
	});

	it('takes the year from the calendar of the given time zone', () => {
		// 05:00 UTC on 1 January 2026 is still 31 December 2025 on the US west coast.
		const paidAt = new Date('2026-01-01T05:00:00Z');
		const west = usReceiptTerms(gift({ paidAt, timeZone: 'America/Los_Angeles' }));
		expect(west.limits.year).toBe(2025);
		expect(usReceiptWording(west, ctx).paidOn).toBe('December 31, 2025');
		expect(usReceiptTerms(gift({ paidAt })).limits.year).toBe(2026);
	});
});

describe('the 2% test (Rev. Proc. 90-12: value ≤ 2% of the payment and ≤ the yearly cap)', () => {
	const item = { goodsDescription: 'a tote bag', tokenItem: false };

	it('disregards goods worth exactly 2% of the payment, not a cent more', () => {
		const at = usReceiptTerms(gift({ ...item, amountCents: 100_00, fairMarketValueCents: 2_00 }));
		expect(at.insubstantial).toBe('two_percent');
		expect(at.deductibleCents).toBe(100_00);
		expect(at.disclosureRequired).toBe(false);
		const over = usReceiptTerms(gift({ ...item, amountCents: 100_00, fairMarketValueCents: 2_01 }));
		expect(over.insubstantial).toBeNull();
		expect(over.deductibleCents).toBe(97_99);
		expect(over.disclosureRequired).toBe(true);
	});

	it('2025: at the $136 cap (Rev. Proc. 2024-40) and just over it', () => {
		const at = usReceiptTerms(
			gift({ ...item, paidAt: in2025, amountCents: 6_800_00, fairMarketValueCents: 136_00 })
		);
		expect(at.insubstantial).toBe('two_percent');
		expect(at.deductibleCents).toBe(6_800_00);
		// 2% of $6,800.50 is $136.01, but the cap is $136.
		const over = usReceiptTerms(
			gift({ ...item, paidAt: in2025, amountCents: 6_800_50, fairMarketValueCents: 136_01 })
		);
		expect(over.insubstantial).toBeNull();
		expect(over.deductibleCents).toBe(6_800_50 - 136_01);
		expect(over.disclosureRequired).toBe(true);
		// 2026's cap is not 2025's.
		const nextYearsCap = usReceiptTerms(
			gift({ ...item, paidAt: in2025, amountCents: 6_950_00, fairMarketValueCents: 139_00 })
		);
		expect(nextYearsCap.insubstantial).toBeNull();
	});

	it('2026: at the $139 cap (Rev. Proc. 2025-32) and just over it', () => {
		const at = usReceiptTerms(
			gift({ ...item, paidAt: in2026, amountCents: 6_950_00, fairMarketValueCents: 139_00 })
		);
		expect(at.insubstantial).toBe('two_percent');
		const over = usReceiptTerms(
			gift({ ...item, paidAt: in2026, amountCents: 6_950_50, fairMarketValueCents: 139_01 })
		);
		expect(over.insubstantial).toBeNull();
	});
});

describe('the token-item test (Rev. Proc. 90-12: payment ≥ minimum, logo items ≤ low-cost article)', () => {
	const mug = { goodsDescription: 'a mug with our logo', tokenItem: true };

	it('2025 (Rev. Proc. 2024-40: $68 minimum payment, $13.60 low-cost article)', () => {
		const at = usReceiptTerms(
			gift({ ...mug, paidAt: in2025, amountCents: 68_00, fairMarketValueCents: 13_60 })
		);
		expect(at.insubstantial).toBe('token_item');
		expect(at.deductibleCents).toBe(68_00);
		expect(usReceiptWording(at, ctx).goodsStatement).toBe(NO_GOODS_STATEMENT);

		const dearer = usReceiptTerms(
			gift({ ...mug, paidAt: in2025, amountCents: 68_00, fairMarketValueCents: 13_61 })
		);
		expect(dearer.insubstantial).toBeNull();
		expect(dearer.deductibleCents).toBe(68_00 - 13_61);

		const smaller = usReceiptTerms(
			gift({ ...mug, paidAt: in2025, amountCents: 67_99, fairMarketValueCents: 13_60 })
		);
		expect(smaller.insubstantial).toBeNull();

		// The same goods without the name or logo are not token items.
		const plain = usReceiptTerms(
			gift({
				...mug,
				tokenItem: false,
				paidAt: in2025,
				amountCents: 68_00,
				fairMarketValueCents: 13_60
			})
		);
		expect(plain.insubstantial).toBeNull();
	});

	it('2026 (Rev. Proc. 2025-32: $69.50 minimum payment, $13.90 low-cost article)', () => {
		const at = usReceiptTerms(
			gift({ ...mug, paidAt: in2026, amountCents: 69_50, fairMarketValueCents: 13_90 })
		);
		expect(at.insubstantial).toBe('token_item');
		const dearer = usReceiptTerms(
			gift({ ...mug, paidAt: in2026, amountCents: 69_50, fairMarketValueCents: 13_91 })
		);
		expect(dearer.insubstantial).toBeNull();
		const smaller = usReceiptTerms(
			gift({ ...mug, paidAt: in2026, amountCents: 69_49, fairMarketValueCents: 13_90 })
		);
		expect(smaller.insubstantial).toBeNull();
		// 2026's figures do not apply to a 2025 gift: $13.90 is over 2025's $13.60.
		const lastYear = usReceiptTerms(
			gift({ ...mug, paidAt: in2025, amountCents: 69_50, fairMarketValueCents: 13_90 })
		);
		expect(lastYear.insubstantial).toBeNull();
	});
});

describe("Tideward's demo levels (invented figures; rules of IRS Publication 1771)", () => {
	const kit = { goodsDescription: 'Swell keepsake kit', fairMarketValueCents: 12_00 };

	it('"Swell" at $15 with a $12 keepsake kit: $3 deductible, no disclosure at $75 or less', () => {
		const terms = usReceiptTerms(gift({ ...kit, amountCents: 15_00 }));
		expect(terms.insubstantial).toBeNull();
		expect(terms.deductibleCents).toBe(3_00);
		expect(terms.disclosureRequired).toBe(false);
		const wording = usReceiptWording(terms, ctx);
		expect(wording.goodsStatement).toContain('provided: Swell keepsake kit.');
		expect(wording.goodsStatement).toContain(
			'fair market value of these goods or services is $12.00'
		);
		expect(wording.goodsStatement).toContain(
			'excess of the payment of $15.00 over that value: $3.00.'
		);
	});

	it('"Reef Classroom" at $60 with an $8 lesson pack: $52 deductible, no disclosure', () => {
		const terms = usReceiptTerms(
			gift({ amountCents: 60_00, fairMarketValueCents: 8_00, goodsDescription: 'Lesson pack' })
		);
		expect(terms.insubstantial).toBeNull();
		expect(terms.deductibleCents).toBe(52_00);
		expect(terms.disclosureRequired).toBe(false);
		expect(usReceiptWording(terms, ctx).deductible).toBe('$52.00');
	});

	it('a $100 gift with the $12 kit: disclosure required, $88 deductible', () => {
		const terms = usReceiptTerms(gift({ ...kit, amountCents: 100_00 }));
		expect(terms.disclosureRequired).toBe(true);
		expect(terms.deductibleCents).toBe(88_00);
		const text = allText(usReceiptWording(terms, ctx));
		expect(text).toContain('Our good-faith estimate of the fair market value');
		expect(text).toContain(
			'limited to the excess of the payment of $100.00 over that value: $88.00.'
		);
	});

	it('a kit marked as a logo item would be disregarded at $100 (2026), but not at $15', () => {
		const token = { ...kit, tokenItem: true };
		expect(usReceiptTerms(gift({ ...token, amountCents: 100_00 })).insubstantial).toBe(
			'token_item'
		);
		expect(usReceiptTerms(gift({ ...token, amountCents: 15_00 })).insubstantial).toBeNull();
	});

	it('goods worth more than the payment leave nothing deductible, never less than nothing', () => {
		const terms = usReceiptTerms(gift({ ...kit, amountCents: 10_00 }));
		expect(terms.deductibleCents).toBe(0);
		expect(usReceiptWording(terms, ctx).deductible).toBe('$0.00');
	});
});

describe('the wording', () => {
	const plain = usReceiptTerms(gift({ amountCents: 250_00 }));

	it('names the organisation, its EIN, the amount and the date, and says no goods were given', () => {
		const wording = usReceiptWording(plain, ctx);
		expect(wording.title).toBe('Contribution receipt');
		expect(wording.notice).toBeNull();
		expect(wording.organisationLines).toEqual([
			'Saltmarsh Sea Turtle Hospital, Inc.',
			'Employer Identification Number (EIN): 00-0000000'
		]);
		expect(wording.paragraphs).toEqual([
			'Saltmarsh Sea Turtle Hospital, Inc. gratefully acknowledges a contribution of $250.00 from Ana Example, received on March 4, 2026.',
			'No goods or services were provided in exchange for this contribution.'
		]);
		expect(wording.caution).toBe(CAUTION);
		expect(wording.caution).toMatch(/keep this receipt/);
		expect(wording.caution).toMatch(/not tax advice/);
	});

	it('claims 501(c)(3) public-charity status only when told to', () => {
		expect(allText(usReceiptWording(plain, ctx))).not.toMatch(/501\(c\)|public charity/);
		const confirmed = usReceiptWording(plain, { ...ctx, publicCharity501c3: true });
		expect(confirmed.organisationLines[2]).toBe(
			'Saltmarsh Sea Turtle Hospital, Inc. is a public charity exempt from federal income tax under section 501(c)(3) of the Internal Revenue Code.'
		);
	});

	it('leaves off an empty EIN and falls back to the display name without a legal name', () => {
		const wording = usReceiptWording(plain, {
			organisation: { legalName: ' ', displayName: 'Saltmarsh', taxId: '' }
		});
		expect(wording.organisationLines).toEqual(['Saltmarsh']);
		expect(wording.paragraphs[0]).toBe(
			'Saltmarsh gratefully acknowledges a contribution of $250.00, received on March 4, 2026.'
		);
	});

	it('marks a corrected receipt and names the one it voids', () => {
		const wording = usReceiptWording(plain, { ...ctx, status: 'corrected', replacesNumber: 122 });
		expect(wording.title).toBe('Corrected contribution receipt');
		expect(wording.notice).toBe('This corrects receipt No. 000122, which is void.');
		expect(wording.paragraphs).toContain(NO_GOODS_STATEMENT);
		expect(() => usReceiptWording(plain, { ...ctx, status: 'corrected' })).toThrow(/replaces/);
	});

	it('writes a void notice after a full refund, with no goods statement or deductible amount', () => {
		const terms = usReceiptTerms(
			gift({ ...{ goodsDescription: 'Kit', fairMarketValueCents: 12_00 } })
		);
		const wording = usReceiptWording(terms, {
			...ctx,
			status: 'void',
			number: 123,
			refundedAt: new Date('2026-03-20T12:00:00Z')
		});
		expect(wording.title).toBe('Notice of void receipt');
		expect(wording.notice).toBe('Receipt No. 000123 is void.');
		expect(wording.paragraphs[0]).toBe(
			'The payment of $100.00 received from Ana Example on March 4, 2026 was refunded in full on March 20, 2026, so receipt No. 000123 no longer acknowledges a contribution.'
		);
		expect(wording.goodsStatement).toBeNull();
		expect(wording.deductible).toBeNull();
		expect(wording.caution).toBe(VOID_CAUTION);
		const text = allText(wording);
		expect(text).not.toContain('limited to the excess');
		expect(text).not.toContain(NO_GOODS_STATEMENT);
		expect(() => usReceiptWording(terms, { ...ctx, status: 'void' })).toThrow(/number/);
	});
});

describe('money and numbers', () => {
	it('formats integer cents as Intl.NumberFormat formats the same dollar amounts', () => {
		const usd = new Intl.NumberFormat('en-US', { style: 'currency', currency: 'USD' });
		for (const cents of [0, 1, 99, 100, 1_500, 8_800, 123_456_789, -5]) {
			expect(formatCents(cents)).toBe(usd.format(cents / 100));
		}
		expect(formatCents(123_456_789)).toBe('$1,234,567.89');
		// Exact beyond a double's reach of cents.
		expect(formatCents(Number.MAX_SAFE_INTEGER)).toBe('$90,071,992,547,409.91');
	});

	it('pads receipt numbers to six digits', () => {
		expect(formatReceiptNumber(123)).toBe('000123');
		expect(formatReceiptNumber(1_234_567)).toBe('1234567');
		expect(() => formatReceiptNumber(0)).toThrow();
	});
});

describe('bad input', () => {
	it('refuses fractional or negative cents, a zero payment, a bad date and other currencies', () => {
		expect(() => usReceiptTerms(gift({ amountCents: 10.5 }))).toThrow(RangeError);
		expect(() => usReceiptTerms(gift({ amountCents: 0 }))).toThrow(RangeError);
		expect(() => usReceiptTerms(gift({ fairMarketValueCents: -1 }))).toThrow(RangeError);
		expect(() => usReceiptTerms(gift({ paidAt: new Date('nonsense') }))).toThrow(RangeError);
		expect(() => usReceiptTerms(gift({ currency: 'cad' }))).toThrow(/US dollars/);
		expect(usReceiptTerms(gift({ currency: 'usd' })).currency).toBe('USD');
	});

	it('needs a description for goods that have a value', () => {
		expect(() => usReceiptTerms(gift({ fairMarketValueCents: 5_00 }))).toThrow(/description/);
	});

	it('treats described goods of no value as disregarded, and cleans the description', () => {
		const terms = usReceiptTerms(
			gift({ goodsDescription: '  Digital   certificate.  ', fairMarketValueCents: 0 })
		);
		expect(terms.goodsProvided).toBe(true);
		expect(terms.goodsDescription).toBe('Digital certificate');
		expect(terms.insubstantial).toBe('two_percent');
		expect(terms.deductibleCents).toBe(100_00);
	});
});

describe('receiptRules', () => {
	it('gives the US module for US, in any case', () => {
		expect(receiptRules('US').terms).toBe(usReceiptTerms);
		expect(receiptRules(' us ').wording).toBe(usReceiptWording);
		expect(receiptRules('US').countryCode).toBe('US');
	});

	it('refuses other countries with a clear message', () => {
		expect(() => receiptRules('CA')).toThrow('No tax-receipt rules for country "CA"');
		expect(() => receiptRules('')).toThrow(/only/);
	});
});

describe('a receipt voided by a partial refund', () => {
	it('keeps its wording and names the corrected receipt that replaces it', () => {
		const terms = usReceiptTerms({
			amountCents: 10_000,
			fairMarketValueCents: 0,
			goodsDescription: '',
			tokenItem: false,
			paidAt: new Date('2026-03-04T12:00:00Z')
		});
		const wording = usReceiptWording(terms, {
			organisation: { legalName: 'Saltmarsh Turtle Hospital, Inc.' },
			number: 41,
			voidedBy: 57
		});
		expect(wording.title).toBe('Void: contribution receipt');
		expect(wording.notice).toBe('Receipt No. 000041 is void: receipt No. 000057 replaces it.');
		expect(wording.paragraphs.join(' ')).toContain('$100.00');
		expect(() =>
			usReceiptWording(terms, { organisation: { legalName: 'X' }, voidedBy: 57 })
		).toThrow(RangeError);
	});
});
