import { describe, expect, it } from 'vitest';
import type { LocationClass } from '../classes';
import { mulberry32 } from '../synthetic';
import { csvRowReader } from './csv-records';
import { NOW } from './test-support';
import type { CsvMapping, MappingField } from './types';
import { checkRow, FUTURE_TOLERANCE_MS, type FieldValue, type RowInput } from './values';

const HEADERS = [
	'timestamp',
	'lat',
	'lon',
	'lc',
	'semi_major',
	'semi_minor',
	'orientation',
	'error_radius',
	'note'
];
const FULL: CsvMapping = {
	time: 'timestamp',
	lat: 'lat',
	lon: 'lon',
	lc: 'lc',
	semiMajorM: 'semi_major',
	semiMinorM: 'semi_minor',
	orientationDeg: 'orientation',
	errorRadiusM: 'error_radius'
};
const FIELDS: readonly MappingField[] = [
	'time',
	'lat',
	'lon',
	'lc',
	'semiMajorM',
	'semiMinorM',
	'orientationDeg',
	'errorRadiusM'
];

/** The plain way: every cell into `checkRow`, which the GeoJSON and GPX readers use too. */
function throughCheckRow(
	headers: readonly string[],
	mapping: CsvMapping,
	rules: { now: number; defaultClass?: LocationClass },
	fields: readonly string[],
	line: number
) {
	const cell = (field: MappingField): FieldValue | null => {
		const i = mapping[field] === undefined ? -1 : headers.indexOf(mapping[field]);
		return i < 0 ? null : { column: headers[i], value: fields[i] ?? '' };
	};
	const input = { row: line, problems: [] } as unknown as RowInput;
	for (const field of FIELDS) input[field] = cell(field);
	if (fields.slice(headers.length).some((value) => value !== '')) {
		input.problems = [
			{
				row: line,
				column: '',
				message: `This row has ${fields.length} fields but the header names ${headers.length} columns; check the separators and quotes.`
			}
		];
	}
	return checkRow(input, rules);
}

const latest = new Date(NOW + FUTURE_TOLERANCE_MS).toISOString();
const CELLS: Readonly<Record<MappingField | 'note', readonly string[]>> = {
	time: [
		'2024-03-01T12:34:56Z',
		'2024-03-01 12:34:56',
		'2024-03-01 12:34:56Z',
		'2024-03-01t12:34:56z',
		'2024-03-01T12:34:56.789Z',
		'2024-02-29 00:00:00',
		'1978-01-01 00:00:00',
		latest,
		'2024-06-01T00:10:00.001Z', // a millisecond too late
		'1977-12-31T23:59:59Z',
		'2023-02-29 12:00:00',
		'2024-04-31T00:00:00Z',
		'2024-03-01 24:00:00',
		'2024-03-01T12:00:00', // no zone
		'2024-03-01T14:00:00+02:00',
		'2024/03/01 12:00:00',
		' 2024-03-01 12:00:00 UTC ',
		'2024-03-01 12:00',
		'2024-03-01',
		'1709294400',
		'yesterday',
		'',
		'   '
	],
	lat: ['10', '-12.5', '90', '-90', '90.5', '-0', '+.5', '1e1', ' 3 ', '12,5', '', 'x', '1e999'],
	lon: ['20', '130.25', '180', '-180', '200', '400', '-180.1', '7.', '1,234.5', '', '0x10'],
	lc: ['A', 'a', 'g', 'G', '3', '0', 'Z', 'z', 'b', ' b ', 'LC A', '4', 'x', '', '  '],
	semiMajorM: ['', '', '1500', '300', '0', '-1', '12,5', ' ', 'abc', '1e999'],
	semiMinorM: ['', '', '300', '800', '0', '-0', '-2', 'x'],
	orientationDeg: ['', '', '45.5', '180', '180.01', '-1', '0', 'NaN'],
	errorRadiusM: ['', '', '25', '0', '-5', '7,5', ' 9 '],
	note: ['', '', 'first fix', '  ']
};

describe('csvRowReader', () => {
	it('gives what checkRow gives, problems and messages included, for 20 000 random rows', () => {
		const random = mulberry32(7);
		const pick = <T>(values: readonly T[]): T => values[Math.floor(random() * values.length)];
		const columns: (MappingField | 'note')[] = [...FIELDS, 'note'];
		const setups: { mapping: CsvMapping; defaultClass?: LocationClass }[] = [
			{ mapping: FULL },
			{ mapping: FULL, defaultClass: 'B' },
			{ mapping: { time: 'timestamp', lat: 'lat', lon: 'lon' }, defaultClass: 'G' },
			{ mapping: { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' } },
			{ mapping: { time: 'note', lat: 'lon', lon: 'lat', lc: 'error_radius' } }
		];
		let good = 0;
		let bad = 0;
		for (let i = 0; i < 20_000; i++) {
			const { mapping, defaultClass } = setups[i % setups.length];
			const rules = { now: NOW, defaultClass };
			// mostly good cells, so that good rows are common
			let fields = columns.map((column) =>
				random() < 0.7 ? CELLS[column][random() < 0.5 ? 0 : 1] : pick(CELLS[column])
			);
			if (mapping.time === 'note') fields[8] = pick(CELLS.time);
			const shape = random();
			if (shape < 0.05) fields = fields.slice(0, Math.floor(random() * fields.length));
			else if (shape < 0.1) fields = [...fields, pick(['', '', 'x', ' ', '0'])];
			const line = 2 + i;
			const expected = throughCheckRow(HEADERS, mapping, rules, fields, line);
			const actual = csvRowReader(HEADERS, mapping, rules)(fields, line);
			expect(actual, JSON.stringify({ fields, mapping, defaultClass })).toStrictEqual(expected);
			if (expected.ok) good++;
			else bad++;
		}
		expect(good).toBeGreaterThan(2_000);
		expect(bad).toBeGreaterThan(2_000);
	});

	it('reads a good row into a position', () => {
		const read = csvRowReader(HEADERS, FULL, { now: NOW });
		expect(
			read(['2024-03-01T12:34:56.789Z', '-12.5', '130.25', 'a', '1500', '300', '45.5', ''], 9)
		).toStrictEqual({
			ok: true,
			position: {
				row: 9,
				// Unix time of 2024-03-01T12:34:56Z: 1709296496 (19 783 days since 1970 × 86 400 s + 45 296 s)
				time: 1_709_296_496_789,
				lat: -12.5,
				lon: 130.25,
				lc: 'A',
				semiMajorM: 1500,
				semiMinorM: 300,
				orientationDeg: 45.5,
				errorRadiusM: null
			}
		});
		expect(19_783 * 86_400 + 12 * 3600 + 34 * 60 + 56).toBe(1_709_296_496);
	});

	it('reports the extra cells and the empty ones of a row as checkRow words them', () => {
		const read = csvRowReader(
			HEADERS.slice(0, 4),
			{ time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' },
			{
				now: NOW
			}
		);
		expect(read(['2024-03-01 12:00:00', '1', '2', 'A', '', 'x'], 3)).toEqual({
			ok: false,
			row: 3,
			problems: [
				{
					row: 3,
					column: '',
					message:
						'This row has 6 fields but the header names 4 columns; check the separators and quotes.'
				}
			]
		});
		expect(read(['2024-03-01 12:00:00', '1'], 4)).toEqual({
			ok: false,
			row: 4,
			problems: [
				{ row: 4, column: 'lon', message: 'No longitude given.' },
				{
					row: 4,
					column: 'lc',
					message: 'No location class given, and no default class was chosen.'
				}
			]
		});
	});
});
