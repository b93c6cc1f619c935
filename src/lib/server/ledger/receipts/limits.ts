// The insubstantial-benefit limits of Rev. Proc. 90-12 (1990-1 C.B. 471), as the IRS indexes them
// for inflation each year. Benefits a supporter gets for a gift may be disregarded when they are
// worth no more than 2% of the payment up to a cap, or when the payment reaches a minimum and the
// only benefits are low-cost articles bearing the organisation's name or logo. Add the new year's
// row when its revenue procedure appears (usually October or November of the year before).

/** One year's limits, in US cents. */
export interface InsubstantialBenefitLimits {
	year: number;
	/** Most a low-cost article (token item bearing the name or logo) may cost. */
	lowCostArticleCents: number;
	/** The 2% test's cap: benefits worth at most 2% of the payment and at most this. */
	twoPercentCapCents: number;
	/** The token-item test needs a payment of at least this. */
	minimumPaymentCents: number;
	/** The revenue procedure that published the row. */
	source: string;
}

export type LimitsForYear = InsubstantialBenefitLimits & {
	/** True when the year has no published row of its own and a nearby year's row stands in. */
	estimated: boolean;
};

/** Oldest first. */
export const INSUBSTANTIAL_BENEFIT_LIMITS: readonly Readonly<InsubstantialBenefitLimits>[] =
	Object.freeze([
		// Rev. Proc. 2024-40, section 3 (§ 170 low-cost article; § 513(h) insubstantial benefits):
		// $13.60 / $136 / $68 for taxable years beginning in 2025.
		Object.freeze({
			year: 2025,
			lowCostArticleCents: 13_60,
			twoPercentCapCents: 136_00,
			minimumPaymentCents: 68_00,
			source: 'Rev. Proc. 2024-40'
		}),
		// Rev. Proc. 2025-32: $13.90 / $139 / $69.50 for taxable years beginning in 2026.
		Object.freeze({
			year: 2026,
			lowCostArticleCents: 13_90,
			twoPercentCapCents: 139_00,
			minimumPaymentCents: 69_50,
			source: 'Rev. Proc. 2025-32'
		})
	]);

/**
 * The limits for a calendar year. A year without a row of its own gets the latest earlier year's
 * row, marked `estimated`: indexing has only ever raised the limits, so last year's are the
 * cautious stand-in until the new revenue procedure is added. A year before the table gets the
 * earliest row, also `estimated` (those older limits were lower; the table does not reach back).
 */
export function limitsFor(year: number): LimitsForYear {
	if (!Number.isSafeInteger(year)) throw new RangeError(`Not a calendar year: ${year}`);
	const table = INSUBSTANTIAL_BENEFIT_LIMITS;
	const exact = table.find((row) => row.year === year);
	if (exact) return { ...exact, estimated: false };
	const earlier = table.filter((row) => row.year < year).at(-1);
	return { ...(earlier ?? table[0]), estimated: true };
}
