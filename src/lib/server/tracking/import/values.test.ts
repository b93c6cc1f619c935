import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../synthetic';
import { NOW } from './test-support';
import {
	checkRow,
	decimalOrNaN,
	EARLIEST_TIME,
	FUTURE_TOLERANCE_MS,
	parseDecimal,
	parseLocationClass,
	parseTimestamp,
	utcTimestampFast,
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

const pad = (n: number, width = 2) => String(n).padStart(width, '0');

/**
 * Outside reference for a date and time written by parts: ECMAScript's own reading of its Date
 * Time String Format (ECMA-262 §21.4.1.32, `Date.parse` of `YYYY-MM-DDTHH:mm:ss.sssZ`). V8
 * accepts some impossible dates there (`2023-02-29` as 1 March, day 31 of any month, `24:00`),
 * so a date counts as real only when `toISOString` gives the same text back.
 */
function reference(
	year: number,
	month: number,
	day: number,
	hour: number,
	minute: number,
	second: number,
	ms = 0
): number {
	const iso = `${pad(year, 4)}-${pad(month)}-${pad(day)}T${pad(hour)}:${pad(minute)}:${pad(second)}.${pad(ms, 3)}Z`;
	const value = Date.parse(iso);
	return Number.isFinite(value) && new Date(value).toISOString() === iso ? value : NaN;
}

describe('utcTimestampFast', () => {
	it('agrees with Date.parse on 20 000 random times from 1990 to 2100, impossible ones included', () => {
		const random = mulberry32(20261202);
		const int = (min: number, max: number) => min + Math.floor(random() * (max - min + 1));
		const disagreements: string[] = [];
		let real = 0;
		let impossible = 0;
		for (let i = 0; i < 20_000; i++) {
			// a fifth of the parts go past their range, to reach every refusal
			const wide = random() < 0.2;
			const year = int(1990, 2100);
			const month = wide ? int(0, 13) : int(1, 12);
			const day = wide ? int(0, 32) : int(1, 31);
			const hour = wide ? int(0, 25) : int(0, 23);
			const minute = wide ? int(0, 61) : int(0, 59);
			const second = wide ? int(0, 61) : int(0, 59);
			const ms = int(0, 999);
			const expected = reference(year, month, day, hour, minute, second);
			const withMs = reference(year, month, day, hour, minute, second, ms);
			const date = `${year}-${pad(month)}-${pad(day)}`;
			const time = `${pad(hour)}:${pad(minute)}:${pad(second)}`;
			const cases: [string, number][] = [
				[`${date}T${time}Z`, expected],
				[`${date} ${time}`, expected],
				[`${date}t${time}z`, expected],
				[`${date}T${time}.${pad(ms, 3)}Z`, withMs],
				[`${date} ${time}.${pad(ms, 3)}`, withMs]
			];
			for (const [text, value] of cases) {
				if (!Object.is(utcTimestampFast(text), value)) disagreements.push(text);
			}
			// parseTimestamp's general path (the slash form never takes the fast one) says the same
			const slashes = `${year}/${pad(month)}/${pad(day)} ${time}`;
			const general = parseTimestamp(slashes);
			if (general.ok ? general.value !== expected : !Number.isNaN(expected)) {
				disagreements.push(slashes);
			}
			if (Number.isNaN(expected)) impossible++;
			else real++;
		}
		expect(disagreements).toEqual([]);
		// both sides were exercised
		expect(real).toBeGreaterThan(15_000);
		expect(impossible).toBeGreaterThan(1_000);
	});

	it('knows the Gregorian leap years and the length of each month', () => {
		// leap years: divisible by 4, except centuries not divisible by 400 (2000 is, 2100 is not)
		expect(utcTimestampFast('2024-02-29T12:00:00Z')).toBe(Date.parse('2024-02-29T12:00:00Z'));
		expect(utcTimestampFast('2000-02-29 00:00:00')).toBe(Date.parse('2000-02-29T00:00:00Z'));
		expect(utcTimestampFast('2024-02-29T12:00:00Z')).toBe(1_709_208_000_000);
		for (const text of [
			'2100-02-29T00:00:00Z',
			'2023-02-29 00:00:00',
			'2024-02-30T00:00:00Z',
			'2024-04-31T00:00:00Z',
			'2024-06-31 00:00:00',
			'2024-09-31 00:00:00',
			'2024-11-31 00:00:00',
			'2024-00-10T00:00:00Z',
			'2024-13-01T00:00:00Z',
			'2024-01-00T00:00:00Z',
			'2024-01-32T00:00:00Z',
			'2024-01-01T24:00:00Z',
			'2024-01-01T23:60:00Z',
			'2024-01-01T23:59:60Z'
		]) {
			expect(utcTimestampFast(text), text).toBeNaN();
			expect(parseTimestamp(text), text).toEqual({
				ok: false,
				message: `“${text}” is not a real date and time.`
			});
		}
		expect(utcTimestampFast('2024-01-31 00:00:00')).toBe(Date.parse('2024-01-31T00:00:00Z'));
		expect(utcTimestampFast('2024-06-30 23:59:59')).toBe(Date.parse('2024-06-30T23:59:59Z'));
		expect(utcTimestampFast('2099-12-31T23:59:59Z')).toBe(Date.parse('2099-12-31T23:59:59Z'));
	});

	it('leaves every other form to the general reader', () => {
		for (const text of [
			'2024-03-01T12:00:00', // ISO without a zone: refused there, with its message
			'2024/03/01 12:00:00',
			'2024-03-01T12:00:00+02:00',
			'2024-03-01 12:00:00 UTC',
			'2024-03-01 12:00',
			'2024-03-01T12:00:00.5Z',
			'2024-03-01T12:00:00,500Z',
			' 2024-03-01 12:00:00',
			'2024-03-01 12:00:00 ',
			'0050-03-01 12:00:00', // Date.UTC would read year 50 as 1950
			'2024-3-01 12:00:00Z',
			'2024-03-01x12:00:00Z',
			'2024-03-01 12-00-00',
			'2O24-03-01 12:00:00',
			'2024-03-01 12:00:0a',
			''
		]) {
			expect(utcTimestampFast(text), text).toBeNaN();
		}
		expect(parseTimestamp('0050-03-01 12:00:00')).toEqual({
			ok: true,
			value: Date.parse('0050-03-01T12:00:00Z')
		});
	});
});

describe('decimalOrNaN', () => {
	it('gives what parseDecimal gives for plain decimals, and NaN where it explains a refusal', () => {
		for (const text of ['-12.5', '+.5', '1e3', '7.', '0', '-0', '179.99999999999997', '1E-7']) {
			expect(Object.is(decimalOrNaN(text), parseDecimal(text).ok && Number(text)), text).toBe(true);
		}
		for (const text of [
			' -12.5 ',
			'12,5',
			'1,234.5',
			'NaN',
			'Infinity',
			'0x10',
			'',
			'-',
			'1e999'
		]) {
			expect(decimalOrNaN(text), text).toBeNaN();
		}
	});
});
