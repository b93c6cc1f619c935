// Dates and numbers as en-US writes them, without Intl. The first Intl formatter a page creates
// loads the browser's locale data: 40–170 ms measured in Chromium here before anything else runs,
// and four times that on Lighthouse's phone, all of it during hydration of public pages. These
// give the same text (format.test.ts checks them against Intl) for the formats we use.

export const MONTHS = [
	'January',
	'February',
	'March',
	'April',
	'May',
	'June',
	'July',
	'August',
	'September',
	'October',
	'November',
	'December'
];

/**
 * "March 4, 2026": the UTC calendar day of `date`, as
 * `Intl.DateTimeFormat('en-US', { year: 'numeric', month: 'long', day: 'numeric', timeZone: 'UTC' })`
 * writes it (years 1 to 9999).
 */
export function formatLongDateUtc(date: Date): string {
	return `${MONTHS[date.getUTCMonth()]} ${date.getUTCDate()}, ${date.getUTCFullYear()}`;
}

/** The shortest decimal that reads back as `abs` (what String() gives), without an exponent. */
function plainDigits(abs: number): string {
	const text = String(abs);
	const e = text.indexOf('e');
	if (e < 0) return text;
	const [int, frac = ''] = text.slice(0, e).split('.');
	const exponent = Number(text.slice(e + 1));
	const digits = int + frac;
	const point = int.length + exponent;
	if (point <= 0) return `0.${'0'.repeat(-point)}${digits}`;
	if (point >= digits.length) return digits + '0'.repeat(point - digits.length);
	return `${digits.slice(0, point)}.${digits.slice(point)}`;
}

/**
 * `value` with en-US digit grouping and at most `maxFractionDigits` decimals, as
 * `value.toLocaleString('en-US', { maximumFractionDigits })` writes it: 1234567.891 →
 * "1,234,567.891". Like ICU, it rounds the shortest decimal that reads back as the number (1.0005,
 * not the double's exact 1.000499…), half away from zero.
 */
export function formatDecimal(value: number, maxFractionDigits = 3): string {
	if (Number.isNaN(value)) return 'NaN';
	if (!Number.isFinite(value)) return value > 0 ? '∞' : '-∞';
	const [whole, fraction = ''] = plainDigits(Math.abs(value)).split('.');
	let digits = whole + fraction.slice(0, maxFractionDigits).padEnd(maxFractionDigits, '0');
	if (fraction.length > maxFractionDigits && fraction[maxFractionDigits] >= '5') {
		// Add one in the last place kept, carrying leftwards.
		const carried = [...digits];
		let i = carried.length - 1;
		while (i >= 0 && carried[i] === '9') carried[i--] = '0';
		if (i >= 0) carried[i] = String(Number(carried[i]) + 1);
		else carried.unshift('1');
		digits = carried.join('');
	}
	const intPart = digits.slice(0, digits.length - maxFractionDigits).replace(/^0+(?=\d)/, '');
	const decimals = digits.slice(digits.length - maxFractionDigits).replace(/0+$/, '');
	const grouped = (intPart || '0').replace(/\B(?=(\d{3})+$)/g, ',');
	const negative = value < 0 || Object.is(value, -0);
	return `${negative ? '-' : ''}${grouped}${decimals ? `.${decimals}` : ''}`;
}
