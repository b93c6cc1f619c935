import { describe, expect, it } from 'vitest';
import { careDays, dayNumber, describeCareDays, todayUtc } from './patient-days';

describe('dayNumber', () => {
	it('counts calendar days from 1970-01-01', () => {
		expect(dayNumber('1970-01-01')).toBe(0);
		expect(dayNumber('1970-01-02')).toBe(1);
		expect(dayNumber('2024-03-01')! - dayNumber('2024-02-28')!).toBe(2); // leap year
		expect(dayNumber('2026-03-01')! - dayNumber('2026-02-28')!).toBe(1);
	});

	it('refuses what is not a real day', () => {
		for (const day of [
			'2026-02-30',
			'2026-13-01',
			'2026-1-5',
			'',
			'yesterday',
			'2026-03-01T00:00'
		]) {
			expect(dayNumber(day), day).toBeNull();
		}
	});
});

describe('todayUtc', () => {
	it('reads the day in UTC, not in the local zone', () => {
		expect(todayUtc(new Date('2026-05-10T23:30:00-05:00'))).toBe('2026-05-11');
	});
});

describe('careDays', () => {
	const today = '2026-05-10';

	it('counts days in care from admission for every status still at the hospital', () => {
		for (const status of [
			'admitted',
			'in_rehabilitation',
			'ready_for_release',
			'permanent_resident'
		] as const) {
			expect(careDays({ status, admittedOn: '2026-04-30', releasedOn: null }, today)).toEqual({
				kind: 'in_care',
				days: 10
			});
		}
	});

	it('counts across a year end and a daylight-saving change without drifting', () => {
		expect(
			careDays({ status: 'admitted', admittedOn: '2025-12-31', releasedOn: null }, '2026-01-01')
		).toEqual({ kind: 'in_care', days: 1 });
		expect(
			careDays({ status: 'admitted', admittedOn: '2026-03-07', releasedOn: null }, '2026-03-09')
		).toEqual({ kind: 'in_care', days: 2 });
	});

	it('counts days since release for a released patient, not days since admission', () => {
		expect(
			careDays({ status: 'released', admittedOn: '2026-01-01', releasedOn: '2026-05-03' }, today)
		).toEqual({ kind: 'since_release', days: 7 });
	});

	it('says nothing for a released patient without a completed release', () => {
		expect(
			careDays({ status: 'released', admittedOn: '2026-01-01', releasedOn: null }, today)
		).toBeNull();
	});

	it('says nothing for a patient who died', () => {
		expect(
			careDays({ status: 'died', admittedOn: '2026-01-01', releasedOn: null }, today)
		).toBeNull();
	});

	it('never counts below zero when a day lies after today', () => {
		expect(
			careDays({ status: 'admitted', admittedOn: '2026-05-11', releasedOn: null }, today)
		).toEqual({ kind: 'in_care', days: 0 });
	});

	it('says nothing when a day is malformed', () => {
		expect(
			careDays({ status: 'admitted', admittedOn: 'soon', releasedOn: null }, today)
		).toBeNull();
		expect(
			careDays({ status: 'admitted', admittedOn: '2026-01-01', releasedOn: null }, 'now')
		).toBeNull();
	});
});

describe('describeCareDays', () => {
	it('words the count for a card', () => {
		expect(describeCareDays({ kind: 'in_care', days: 0 })).toBe('Admitted today');
		expect(describeCareDays({ kind: 'in_care', days: 1 })).toBe('1 day in care');
		expect(describeCareDays({ kind: 'in_care', days: 1212 })).toBe('1,212 days in care');
		expect(describeCareDays({ kind: 'since_release', days: 0 })).toBe('Released today');
		expect(describeCareDays({ kind: 'since_release', days: 30 })).toBe('30 days since release');
		expect(describeCareDays(null)).toBeNull();
	});
});
