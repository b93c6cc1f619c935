import { describe, expect, it } from 'vitest';
import { formatDecimal, formatLongDateUtc } from './format';

// The reference is Intl itself (ICU in Node), the formatter these functions stand in for.

/** A seeded pseudo-random sequence (mulberry32), so that a failure can be replayed. */
function random(seed: number): () => number {
	let a = seed;
	return () => {
		a = (a + 0x6d2b79f5) | 0;
		let t = Math.imul(a ^ (a >>> 15), 1 | a);
		t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

describe('formatLongDateUtc', () => {
	const intl = new Intl.DateTimeFormat('en-US', {
		year: 'numeric',
		month: 'long',
		day: 'numeric',
		timeZone: 'UTC'
	});

	it('writes every day from 1999 to 2031 as Intl does, in UTC', () => {
		for (let t = Date.UTC(1999, 0, 1); t < Date.UTC(2032, 0, 1); t += 86_400_000) {
			// Late in the UTC day: a local-time formatter west of Greenwich would say the day before.
			const date = new Date(t + 23 * 3_600_000 + 59 * 60_000);
			expect(formatLongDateUtc(date)).toBe(intl.format(date));
		}
	});

	it('gives the example in its comment', () => {
		expect(formatLongDateUtc(new Date('2026-03-04T00:00:00Z'))).toBe('March 4, 2026');
	});
});

describe('formatDecimal', () => {
	const cases = [
		0,
		-0,
		1,
		-1,
		7,
		12,
		999,
		1000,
		1001,
		12_345,
		999_999,
		1_000_000,
		-1_234_567,
		2.5,
		3.5,
		-2.5,
		0.5,
		1.005,
		1.0005,
		1.125,
		1234.5678,
		0.0001,
		-0.0001,
		45.67,
		63.9,
		12.4,
		0.05,
		1e15,
		123e15,
		Number.MAX_SAFE_INTEGER,
		1e21,
		2.5e22,
		1e-7,
		4.9999e-4,
		5e-7,
		NaN,
		Infinity,
		-Infinity
	];

	for (const digits of [0, 1, 2, 3]) {
		it(`writes ${cases.length} chosen values with at most ${digits} decimals as Intl does`, () => {
			for (const value of cases) {
				expect(formatDecimal(value, digits), String(value)).toBe(
					value.toLocaleString('en-US', { maximumFractionDigits: digits })
				);
			}
		});
	}

	it('writes 20,000 random distances, weights and counts as Intl does', () => {
		const next = random(20_260_302);
		for (let i = 0; i < 20_000; i++) {
			const scale = 10 ** Math.floor(next() * 9);
			const value = (next() - 0.2) * scale;
			const digits = Math.floor(next() * 4);
			expect(formatDecimal(value, digits), `${value} (${digits})`).toBe(
				value.toLocaleString('en-US', { maximumFractionDigits: digits })
			);
		}
	});

	it('defaults to three decimals, as toLocaleString does', () => {
		expect(formatDecimal(1234.56789)).toBe((1234.56789).toLocaleString('en-US'));
		expect(formatDecimal(1234.56789)).toBe('1,234.568');
	});
});
