import { describe, expect, it } from 'vitest';
import { NOW } from './test-support';
import {
	checkRow,
	EARLIEST_TIME,
	FUTURE_TOLERANCE_MS,
	parseDecimal,
	parseLocationClass,
	parseTimestamp,
	type FieldValue,
	type RowInput
} from './values';

const DAY = 86_400_000;

describe('parseTimestamp', () => {
	it('converts explicit offsets to UTC (checked against values computed by hand)', () => {
		// 1970-01-01 → 2024-01-01: 54 years × 365 days + 13 leap days (1972 … 2020) = 19 723 days,
		// i.e. 1 704 067 200 000 ms, the well-known Unix time 1704067200 of 2024-01-01T00:00:00Z.
		const jan1 = 19_723 * DAY;
		expect(jan1).toBe(1_704_067_200_000);
		// 23:30 at +05:30 is 18:00 UTC the same day; 2024-03-10 is day 31 + 29 + 9 = 69 of 2024.
		expect(parseTimestamp('2024-03-10T23:30:00+05:30')).toEqual({
			ok: true,
			value: jan1 + 69 * DAY + 18 * 3_600_000
		});
		expect(jan1 + 69 * DAY + 18 * 3_600_000).toBe(1_710_093_600_000);
		// 22:15 at -03:00 on New Year's Eve is 01:15 UTC on 1 January, across a year boundary.
		expect(parseTimestamp('2023-12-31T22:15:00-03:00')).toEqual({
			ok: true,
			value: jan1 + 75 * 60_000
		});
		// compact offset and offset in hours only
		expect(parseTimestamp('2023-12-31T22:15:00-0300')).toEqual(
			parseTimestamp('2023-12-31T22:15:00-03:00')
		);
		expect(parseTimestamp('2024-01-01T02:00:00+02')).toEqual({ ok: true, value: jan1 });
	});

	it('reads Z, UTC and the zone-less space forms as UTC', () => {
		const t = Date.UTC(2024, 2, 1, 12, 34, 56);
		for (const text of [
			'2024-03-01T12:34:56Z',
			'2024-03-01t12:34:56z',
			'2024-03-01 12:34:56',
			'2024/03/01 12:34:56',
			' 2024-03-01 12:34:56 UTC ',
			'2024-03-01 12:34:56Z'
		]) {
			expect(parseTimestamp(text), text).toEqual({ ok: true, value: t });
		}
		expect(parseTimestamp('2024-03-01T12:34:56.789Z')).toEqual({ ok: true, value: t + 789 });
		expect(parseTimestamp('2024-03-01T12:34:56.7891Z')).toEqual({ ok: true, value: t + 789 });
		expect(parseTimestamp('2024-03-01 12:34')).toEqual({ ok: true, value: t - 56_000 });
		expect(parseTimestamp('2024-02-29 00:00:00')).toEqual({
			ok: true,
			value: Date.UTC(2024, 1, 29)
		});
	});

	it('refuses what it cannot read, with a message that says why', () => {
		expect(parseTimestamp('2024-03-01T12:00:00')).toEqual({
			ok: false,
			message: '“2024-03-01T12:00:00” has no time zone; add Z for UTC or an offset such as +02:00.'
		});
		expect(parseTimestamp('2024-03-01')).toEqual({
			ok: false,
			message: '“2024-03-01” has a date but no time of day.'
		});
		expect(parseTimestamp('01/03/2024 12:00:00')).toEqual({
			ok: false,
			message:
				'“01/03/2024 12:00:00” is not a time we can read; use ISO 8601 such as 2024-03-01T12:00:00Z or 2024-03-01T14:00:00+02:00, or 2024-03-01 12:00:00 (read as UTC).'
		});
		expect(parseTimestamp('1709294400')).toMatchObject({
			ok: false,
			message: expect.stringMatching(/^“1709294400” looks like a Unix time number; use ISO 8601/)
		});
		for (const text of [
			'2023-02-29 12:00:00',
			'2024-13-01 12:00:00',
			'2024-04-31 00:00:00',
			'2024-03-01 24:00:00',
			'2024-03-01 12:60:00'
		]) {
			expect(parseTimestamp(text), text).toEqual({
				ok: false,
				message: `“${text}” is not a real date and time.`
			});
		}
		expect(parseTimestamp('2024-03-01T12:00:00+15:00')).toEqual({
			ok: false,
			message: '“2024-03-01T12:00:00+15:00” has a time zone offset beyond ±14:00.'
		});
		expect(parseTimestamp('2024-03-01-12:00:00').ok).toBe(false);
		expect(parseTimestamp('2024/03-01 12:00:00').ok).toBe(false);
	});
});

describe('parseDecimal', () => {
	it('reads plain decimals with a point', () => {
		expect(parseDecimal(' -12.5 ')).toEqual({ ok: true, value: -12.5 });
		expect(parseDecimal('+.5')).toEqual({ ok: true, value: 0.5 });
		expect(parseDecimal('1e3')).toEqual({ ok: true, value: 1000 });
		expect(parseDecimal('7.')).toEqual({ ok: true, value: 7 });
	});

	it('refuses decimal commas, thousands separators and non-numbers', () => {
		expect(parseDecimal('12,5')).toEqual({
			ok: false,
			message: '“12,5” uses a decimal comma; use a decimal point (12.5).'
		});
		expect(parseDecimal('1,234.5')).toEqual({
			ok: false,
			message: '“1,234.5” is not a number; use a decimal point and no thousands separators.'
		});
		for (const text of ['NaN', 'Infinity', '0x10', '12.5N', '', '-', '1 000']) {
			expect(parseDecimal(text), text).toEqual({
				ok: false,
				message: `“${text}” is not a number.`
			});
		}
		expect(parseDecimal('1e999')).toEqual({ ok: false, message: '“1e999” is too large.' });
	});
});

describe('parseLocationClass', () => {
	it('accepts every class, trimmed and in either case', () => {
		for (const lc of ['G', '3', '2', '1', '0', 'A', 'B', 'Z']) {
			expect(parseLocationClass(` ${lc.toLowerCase()} `)).toEqual({ ok: true, value: lc });
		}
		expect(parseLocationClass('LC A')).toEqual({
			ok: false,
			message: '“LC A” is not a location class; expected one of G, 3, 2, 1, 0, A, B, Z.'
		});
		expect(parseLocationClass('4').ok).toBe(false);
	});
});

function field(column: string, value: unknown): FieldValue {
	return { column, value };
}

function row(values: Partial<Record<keyof RowInput, unknown>>): RowInput {
	const input: RowInput = {
		row: 7,
		time: field('t', '2024-03-01 12:00:00'),
		lat: field('la', '10'),
		lon: field('lo', '20'),
		lc: field('c', 'A'),
		semiMajorM: null,
		semiMinorM: null,
		orientationDeg: null,
		errorRadiusM: null
	};
	for (const [key, value] of Object.entries(values)) {
		(input as unknown as Record<string, unknown>)[key] = value === null ? null : field(key, value);
	}
	return input;
}

describe('checkRow', () => {
	const rules = { now: NOW };

	it('builds a position from good values', () => {
		expect(
			checkRow(
				row({ semiMajorM: '1200', semiMinorM: 300, orientationDeg: '180', errorRadiusM: '0' }),
				rules
			)
		).toEqual({
			ok: true,
			position: {
				row: 7,
				time: Date.UTC(2024, 2, 1, 12),
				lat: 10,
				lon: 20,
				lc: 'A',
				semiMajorM: 1200,
				semiMinorM: 300,
				orientationDeg: 180,
				errorRadiusM: 0
			}
		});
	});

	it('accepts the range limits', () => {
		for (const [lat, lon] of [
			['90', '180'],
			['-90', '-180']
		]) {
			expect(checkRow(row({ lat, lon }), rules).ok).toBe(true);
		}
		expect(checkRow(row({ time: '1978-01-01 00:00:00' }), rules).ok).toBe(true);
		const edge = new Date(NOW + FUTURE_TOLERANCE_MS).toISOString();
		expect(checkRow(row({ time: edge }), rules).ok).toBe(true);
		expect(EARLIEST_TIME).toBe(Date.UTC(1978, 0, 1));
	});

	it('reports every problem of a row with its column', () => {
		const result = checkRow(
			row({
				time: '2024-06-01 00:10:01',
				lat: '-90.5',
				lon: '200',
				lc: 'x',
				semiMajorM: '-1',
				semiMinorM: 'abc',
				orientationDeg: '181',
				errorRadiusM: '12,5'
			}),
			rules
		);
		expect(result).toEqual({
			ok: false,
			row: 7,
			problems: [
				{
					row: 7,
					column: 'time',
					message:
						'“2024-06-01 00:10:01” (2024-06-01 00:10:01 UTC) is in the future; times must be in UTC and not later than now.'
				},
				{ row: 7, column: 'lat', message: 'Latitude -90.5 is outside -90 to 90.' },
				{
					row: 7,
					column: 'lon',
					message:
						'Longitude 200 is outside -180 to 180; convert 0–360 longitudes by subtracting 360 from those over 180.'
				},
				{
					row: 7,
					column: 'lc',
					message: '“x” is not a location class; expected one of G, 3, 2, 1, 0, A, B, Z.'
				},
				{ row: 7, column: 'semiMajorM', message: 'Semi-major axis must not be negative (-1).' },
				{ row: 7, column: 'semiMinorM', message: '“abc” is not a number.' },
				{
					row: 7,
					column: 'orientationDeg',
					message: 'Ellipse orientation 181 is outside 0 to 180 degrees.'
				},
				{
					row: 7,
					column: 'errorRadiusM',
					message: '“12,5” uses a decimal comma; use a decimal point (12.5).'
				}
			]
		});
	});

	it('refuses times before 1978 and longitudes beyond 360 without the 0–360 hint', () => {
		expect(checkRow(row({ time: '1977-12-31 23:59:59', lon: '400' }), rules)).toEqual({
			ok: false,
			row: 7,
			problems: [
				{
					row: 7,
					column: 'time',
					message:
						'“1977-12-31 23:59:59” is before 1 January 1978, the start of Argos satellite tracking; check the date.'
				},
				{ row: 7, column: 'lon', message: 'Longitude 400 is outside -180 to 180.' }
			]
		});
	});

	it('reports empty required values, and uses the default class only when a class is missing', () => {
		expect(checkRow(row({ time: '', lat: ' ', lc: '' }), rules)).toEqual({
			ok: false,
			row: 7,
			problems: [
				{ row: 7, column: 'time', message: 'No time given.' },
				{ row: 7, column: 'lat', message: 'No latitude given.' },
				{
					row: 7,
					column: 'lc',
					message: 'No location class given, and no default class was chosen.'
				}
			]
		});
		const withDefault = { now: NOW, defaultClass: 'G' as const };
		expect(checkRow(row({ lc: '' }), withDefault)).toMatchObject({
			ok: true,
			position: { lc: 'G' }
		});
		expect(checkRow(row({ lc: null }), withDefault)).toMatchObject({
			ok: true,
			position: { lc: 'G' }
		});
		expect(checkRow(row({ lc: 'b' }), withDefault)).toMatchObject({
			ok: true,
			position: { lc: 'B' }
		});
	});

	it('flags a semi-minor axis longer than the semi-major axis', () => {
		expect(checkRow(row({ semiMajorM: '300', semiMinorM: '800' }), rules)).toEqual({
			ok: false,
			row: 7,
			problems: [
				{
					row: 7,
					column: 'semiMinorM',
					message:
						'The semi-minor axis (800 m) is longer than the semi-major axis (300 m); are the columns swapped?'
				}
			]
		});
	});

	it('takes JSON numbers as they are but refuses other JSON types', () => {
		expect(checkRow(row({ lat: 10.25, lon: -0.5 }), rules)).toMatchObject({
			ok: true,
			position: { lat: 10.25, lon: -0.5 }
		});
		expect(checkRow(row({ lat: true, time: 1709294400000 }), rules)).toMatchObject({
			ok: false,
			problems: [
				{
					column: 'time',
					message: expect.stringMatching(/^“1709294400000” is not a time; use ISO 8601/)
				},
				{ column: 'lat', message: '“true” is not a number.' }
			]
		});
	});
});
