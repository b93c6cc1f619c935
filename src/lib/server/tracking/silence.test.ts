import { describe, expect, it } from 'vitest';
import { DAY_MS, daysSince, transmitterSilent } from './silence';

const NOW = Date.UTC(2024, 8, 15, 12, 0, 0);

describe('daysSince', () => {
	it('counts whole days elapsed', () => {
		expect(daysSince(NOW, NOW)).toBe(0);
		expect(daysSince(NOW - DAY_MS + 1, NOW)).toBe(0);
		expect(daysSince(NOW - DAY_MS, NOW)).toBe(1);
		expect(daysSince(Date.UTC(2024, 7, 16, 12, 0, 0), NOW)).toBe(30);
	});

	it('is null without a time and 0 for a time slightly in the future', () => {
		expect(daysSince(null, NOW)).toBeNull();
		expect(daysSince(NOW + 5 * 60_000, NOW)).toBe(0);
	});

	it('refuses non-finite times', () => {
		expect(() => daysSince(Number.NaN, NOW)).toThrow(RangeError);
	});
});

describe('transmitterSilent (default 30 days, issue 4)', () => {
	it('is silent from exactly 30 days after the last fix, not a millisecond before', () => {
		const last = NOW - 30 * DAY_MS;
		expect(transmitterSilent(last, NOW)).toBe(true);
		expect(transmitterSilent(last + 1, NOW)).toBe(false);
		expect(transmitterSilent(NOW - 2 * DAY_MS, NOW)).toBe(false);
	});

	it('honours a custom number of days', () => {
		expect(transmitterSilent(NOW - 8 * DAY_MS, NOW, 7)).toBe(true);
		expect(transmitterSilent(NOW - 8 * DAY_MS, NOW, 10)).toBe(false);
	});

	it('a transmitter that never reported is not silent (no signal yet)', () => {
		expect(transmitterSilent(null, NOW)).toBe(false);
	});

	it('refuses a non-positive number of days', () => {
		expect(() => transmitterSilent(NOW, NOW, 0)).toThrow(RangeError);
		expect(() => transmitterSilent(NOW, NOW, -3)).toThrow(RangeError);
	});
});
