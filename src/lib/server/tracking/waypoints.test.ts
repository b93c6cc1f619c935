import { describe, expect, it } from 'vitest';
import { DEFAULT_STEP_METRES, crossedSteps, latestStep, stepsReached } from './waypoints';

describe('crossedSteps', () => {
	it('defaults to 500 km steps', () => {
		expect(DEFAULT_STEP_METRES).toBe(500_000);
		expect(crossedSteps(400_000, 600_000)).toEqual([1]);
	});

	it('lists every step crossed at once; the caller names only the latest', () => {
		expect(crossedSteps(120_000, 1_730_000)).toEqual([1, 2, 3]);
		expect(latestStep(120_000, 1_730_000)).toBe(3);
		expect(crossedSteps(0, 2_600_000, 1_000_000)).toEqual([1, 2]);
	});

	it('yields nothing when the distance goes backwards (a fix removed by cleaning)', () => {
		expect(crossedSteps(1_020_000, 980_000)).toEqual([]);
		expect(latestStep(1_020_000, 980_000)).toBeNull();
		// and does not announce step 2 again when the distance recovers
		expect(crossedSteps(980_000, 1_010_000)).toEqual([2]);
		expect(crossedSteps(1_020_000, 1_010_000)).toEqual([]);
	});

	it('counts a step as reached at exactly n × step, and only once', () => {
		expect(crossedSteps(499_999.999, 500_000)).toEqual([1]);
		expect(crossedSteps(500_000, 500_000)).toEqual([]);
		expect(crossedSteps(500_000, 999_999.999)).toEqual([]);
		expect(crossedSteps(500_000, 1_000_000)).toEqual([2]);
		expect(crossedSteps(0, 499_999.999)).toEqual([]);
		expect(latestStep(0, 0)).toBeNull();
		expect(stepsReached(1_500_000)).toBe(3);
	});

	it('honours an organisation step', () => {
		expect(crossedSteps(0, 950_000, 250_000)).toEqual([1, 2, 3]);
		expect(latestStep(950_000, 1_000_000, 250_000)).toBe(4);
	});

	it('refuses nonsense', () => {
		expect(() => crossedSteps(0, 1, 0)).toThrow(RangeError);
		expect(() => crossedSteps(-1, 1)).toThrow(RangeError);
		expect(() => crossedSteps(0, Number.POSITIVE_INFINITY)).toThrow(RangeError);
	});
});
