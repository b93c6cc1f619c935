import { describe, expect, it } from 'vitest';
import { ApiError, canonical, checkShape, parseParams } from './form';
import { addInterval, processingFee } from './objects';

describe('form parameters in bracket notation', () => {
	it('reads nested objects, indexed and appended arrays', () => {
		// As the SDK writes them (indexed arrays, brackets left unencoded) and as curl users do.
		const params = parseParams(
			'mode=payment&line_items[0][quantity]=1&line_items[0][price_data][unit_amount]=2500' +
				'&line_items[1][quantity]=2&expand[]=payment_intent&expand[]=subscription' +
				'&metadata[adoption_id]=a%20b&metadata[0]=zero&success_url=https%3A%2F%2Fx.test%2F%3Fs%3D%7BCHECKOUT_SESSION_ID%7D'
		);
		expect(params).toEqual({
			mode: 'payment',
			line_items: [{ quantity: '1', price_data: { unit_amount: '2500' } }, { quantity: '2' }],
			expand: ['payment_intent', 'subscription'],
			metadata: { adoption_id: 'a b', '0': 'zero' },
			success_url: 'https://x.test/?s={CHECKOUT_SESSION_ID}'
		});
	});

	it('refuses malformed names and unknown parameters', () => {
		expect(() => parseParams('a[b=1')).toThrow(ApiError);
		expect(() => parseParams('items[0]=1&items[x]=2')).toThrow(ApiError);
		expect(() => checkShape(parseParams('mode=x&foo=1'), { mode: 'scalar' })).toThrow(
			/unknown parameter: foo/
		);
		expect(() =>
			checkShape(parseParams('line_items[0][price_data][bar]=1'), {
				line_items: [{ price_data: { unit_amount: 'scalar' } }]
			})
		).toThrow(/line_items\[0\]\[price_data\]\[bar\]/);
	});

	it('compares parameters independently of their order', () => {
		expect(canonical(parseParams('a=1&b[c]=2&b[d]=3'))).toBe(
			canonical(parseParams('b[d]=3&b[c]=2&a=1'))
		);
		expect(canonical(parseParams('a=1'))).not.toBe(canonical(parseParams('a=2')));
	});
});

describe('money and dates', () => {
	// 2.9 % + 30 ¢ is the common US card rate, a rule of thumb (not an account's real pricing).
	it('takes 2.9 % rounded half up to the cent, plus 30 ¢', () => {
		expect(processingFee(2500)).toBe(103); // 72.5 → 73, + 30
		expect(processingFee(1000)).toBe(59); // 29 + 30
		expect(processingFee(1500)).toBe(74); // 43.5 → 44, + 30
		expect(processingFee(50)).toBe(31); // 1.45 → 1, + 30
	});

	it('keeps the day of the month, or the month end when it is shorter', () => {
		const jan31 = Date.UTC(2025, 0, 31, 10) / 1000;
		expect(new Date(addInterval(jan31, 'month', 1) * 1000).toISOString()).toBe(
			'2025-02-28T10:00:00.000Z'
		);
		expect(new Date(addInterval(jan31, 'month', 2) * 1000).toISOString()).toBe(
			'2025-03-31T10:00:00.000Z'
		);
		expect(new Date(addInterval(jan31, 'year', 1) * 1000).toISOString()).toBe(
			'2026-01-31T10:00:00.000Z'
		);
		const feb29 = Date.UTC(2024, 1, 29) / 1000;
		expect(new Date(addInterval(feb29, 'year', 1) * 1000).toISOString()).toBe(
			'2025-02-28T00:00:00.000Z'
		);
	});
});
