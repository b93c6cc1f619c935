import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { parseCsv, previewCsv, sniffDelimiter } from './csv';
import { parsePositions } from './index';
import { collect, NOW, positions, problems, streamOf } from './test-support';
import { ImportFileError, type CsvMapping } from './types';

const MAPPING: CsvMapping = {
	time: 'timestamp',
	lat: 'lat',
	lon: 'lon',
	lc: 'lc',
	semiMajorM: 'semi_major',
	semiMinorM: 'semi_minor',
	orientationDeg: 'orientation',
	errorRadiusM: 'error_radius'
};

const MAPPING_4: CsvMapping = { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' };

function parse(text: string, mapping: CsvMapping = MAPPING, extra: object = {}) {
	return collect(parsePositions(streamOf(text), { format: 'csv', mapping, now: NOW, ...extra }));
}

/** A source of `rows` data rows that records how far it was read and whether it was closed. */
function countingSource(rows: number) {
	const state = { pulled: 0, finished: false };
	async function* lines() {
		try {
			yield 'timestamp,lat,lon,lc\n';
			for (let i = 0; i < rows; i++) {
				state.pulled++;
				yield `2024-03-01 12:00:00,${i % 90},0,A\n`;
			}
		} finally {
			state.finished = true;
		}
	}
	const source = Readable.from(lines(), { objectMode: false });
	return { source, state };
}

describe('parsePositions, CSV', () => {
	it('reads every field of good rows; rows are numbered as lines, the header being line 1', async () => {
		const items = await parse(
			[
				'timestamp,lat,lon,lc,semi_major,semi_minor,orientation,error_radius',
				'2024-03-01T12:00:00Z,-12.5,130.25,A,1500,300,45.5,',
				'2024-03-01 13:00:00,-12.6,130.3,g,,,,25'
			].join('\n')
		);
		expect(items).toEqual([
			{
				ok: true,
				position: {
					row: 2,
					time: Date.UTC(2024, 2, 1, 12),
					lat: -12.5,
					lon: 130.25,
					lc: 'A',
					semiMajorM: 1500,
					semiMinorM: 300,
					orientationDeg: 45.5,
					errorRadiusM: null
				}
			},
			{
				ok: true,
				position: {
					row: 3,
					time: Date.UTC(2024, 2, 1, 13),
					lat: -12.6,
					lon: 130.3,
					lc: 'G',
					semiMajorM: null,
					semiMinorM: null,
					orientationDeg: null,
					errorRadiusM: 25
				}
			}
		]);
	});

	it('handles a BOM, CRLF, semicolons, blank lines and decimal commas', async () => {
		const text =
			'\uFEFFTime;Lat;Lon;LC\r\n' +
			'2024-03-01 12:00:00;10.5;20.5;1\r\n' +
			'\r\n' +
			'   \r\n' +
			'2024-03-01 13:00:00;10,5;20.5;2\r\n' +
			';;;\r\n' +
			'2024-03-01T15:00:00+02:00;11;21;b\r\n';
		const items = await parse(text, { time: 'Time', lat: 'Lat', lon: 'Lon', lc: 'LC' });
		expect(positions(items)).toEqual([
			expect.objectContaining({ row: 2, lat: 10.5, lon: 20.5, lc: '1' }),
			expect.objectContaining({ row: 7, time: Date.UTC(2024, 2, 1, 13), lc: 'B' })
		]);
		expect(problems(items)).toEqual([
			{
				row: 5,
				column: 'Lat',
				message: '“10,5” uses a decimal comma; use a decimal point (10.5).'
			}
		]);
	});

	it('reads tab-separated files and quoted cells spanning lines', async () => {
		const text =
			'"timestamp"\t"lat"\t"lon"\t"lc"\t"note"\n' +
			'2024-03-01 12:00:00\t1\t2\tA\t"first\r\nsecond\nthird"\n' +
			'2024-03-01 12:00:00\t91\t2\tA\t\n';
		const items = await parse(text, { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' });
		expect(items.map((item) => (item.ok ? item.position.row : item.row))).toEqual([2, 5]);
		expect(problems(items)).toEqual([
			{ row: 5, column: 'lat', message: 'Latitude 91 is outside -90 to 90.' }
		]);
	});

	it('counts lines ending in a lone CR', async () => {
		const text = 'timestamp,lat,lon,lc\r2024-03-01 12:00:00,1,2,A\r\r2024-03-01 12:00:00,1,x,A\r';
		const items = await parse(text, { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' });
		expect(items[0]).toMatchObject({ ok: true, position: { row: 2 } });
		expect(problems(items)).toEqual([{ row: 4, column: 'lon', message: '“x” is not a number.' }]);
	});

	it('keeps multi-byte characters cut across chunks', async () => {
		const preview = await previewCsv(
			streamOf('timestamp,lat,lon,lc,site\n2024-03-01 12:00:00,1,2,A,Île Émeraude\n', 1)
		);
		expect(preview.rows).toEqual([['2024-03-01 12:00:00', '1', '2', 'A', 'Île Émeraude']]);
	});

	it('uses the default class for rows without one', async () => {
		const text = 'timestamp,lat,lon,lc\n2024-03-01 12:00:00,1,2,\n2024-03-01 12:00:00,1,2,3\n';
		const mapping = { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' };
		expect(positions(await parse(text, mapping, { defaultClass: 'G' })).map((p) => p.lc)).toEqual([
			'G',
			'3'
		]);
		expect(problems(await parse(text, mapping))).toEqual([
			{ row: 2, column: 'lc', message: 'No location class given, and no default class was chosen.' }
		]);
		const noClassColumn = { time: 'timestamp', lat: 'lat', lon: 'lon' };
		expect(
			positions(await parse(text, noClassColumn, { defaultClass: 'B' })).map((p) => p.lc)
		).toEqual(['B', 'B']);
	});

	it('accepts trailing empty cells but reports rows with extra values', async () => {
		const text =
			'timestamp,lat,lon,lc,\n' +
			'2024-03-01 12:00:00,1,2,A,,\n' +
			'2024-03-01 12:00:00,1,2,A,x\n' +
			'2024-03-01 12:00:00,1\n';
		const items = await parse(text, { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' });
		expect(items[0].ok).toBe(true);
		expect(problems(items)).toEqual([
			{
				row: 3,
				column: '',
				message:
					'This row has 5 fields but the header names 4 columns; check the separators and quotes.'
			},
			{ row: 4, column: 'lon', message: 'No longitude given.' },
			{ row: 4, column: 'lc', message: 'No location class given, and no default class was chosen.' }
		]);
	});

	it('refuses files without a usable header row', async () => {
		const cases: [string, string][] = [
			['', 'The file is empty.'],
			['\uFEFF\r\n  \r\n', 'The file is empty.'],
			[
				'2024-03-01 12:00:00,1,2,A\n',
				'The first line looks like data (“2024-03-01 12:00:00”), not column names; add a header row naming the columns.'
			],
			[
				'time,lat,Lat,lc\n',
				'The header row names “Lat” twice (columns 2 and 3); column names must be distinct.'
			],
			['time,,lon,lc\n', 'Column 2 has no name in the header row; every column needs a name.'],
			[
				'x'.repeat(130_000),
				'The first line is longer than 128 000 bytes; this does not look like a CSV file with a header row.'
			],
			[
				'time lat lon\n1 2 3\n',
				'The first line has no comma, semicolon or tab, so its columns cannot be told apart; a position file needs a header row with at least time, latitude and longitude columns.'
			],
			[
				'timestamp,lat,lon,lc\n2024-03-01 12:00:00,"1,2,A\n',
				'This is not a readable CSV file: Quote Not Closed: the parsing is finished with an opening quote at line 2'
			]
		];
		const mapping = { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' };
		for (const [text, message] of cases) {
			await expect(parse(text, mapping), JSON.stringify(text)).rejects.toThrow(
				new ImportFileError(message)
			);
		}
	});

	it('refuses a mapping that does not fit the file', async () => {
		await expect(
			parse('timestamp,lat,lon,lc\n2024-03-01 12:00:00,1,2,A\n', {
				time: 'timestamp',
				lat: 'latitude',
				lon: 'lat',
				lc: 'lc'
			})
		).rejects.toThrow(
			new ImportFileError(
				'The columns chosen do not fit this file: There is no column named “latitude” in this file.'
			)
		);
		expect(() => parsePositions(streamOf('x'), { format: 'csv', now: NOW })).toThrow(TypeError);
	});

	it('takes a delimiter chosen by the caller', async () => {
		const text = 'timestamp,lat;lon;lc\n2024-03-01 12:00:00,x;1;2\n';
		const items = await collect(
			parseCsv(streamOf(text), {
				mapping: { time: 'timestamp,lat', lat: 'lon', lon: 'lc' },
				defaultClass: 'G',
				delimiter: ';',
				now: NOW
			})
		);
		expect(problems(items)).toEqual([
			{
				row: 2,
				column: 'timestamp,lat',
				message: expect.stringMatching(/^“2024-03-01 12:00:00,x” is not a time we can read/)
			}
		]);
	});

	it('numbers the rows of a long file right across chunks, blank lines and quoted line breaks', async () => {
		let text = 'timestamp,lat,lon,lc,note\n';
		let line = 1;
		const good: number[] = [];
		const bad: number[] = [];
		for (let i = 0; i < 10_000; i++) {
			const time = new Date(Date.UTC(2024, 0, 1) + i * 60_000).toISOString();
			const lat = i % 777 === 0 ? '91' : String((i % 1800) / 20 - 45);
			const note = i % 2500 === 1 ? '"two\r\nlines"' : i % 3 === 0 ? 'x' : '';
			line++;
			text += `${time},${lat},${(i % 3600) / 10 - 180},${'G3210ABZ'[i % 8]},${note}\n`;
			(lat === '91' ? bad : good).push(line);
			if (note.includes('\n')) line++;
			if (i % 1000 === 999) {
				text += '\n , ,\n';
				line += 2;
			}
		}
		const items = await collect(
			parsePositions(streamOf(text, 997), { format: 'csv', mapping: MAPPING_4, now: NOW })
		);
		expect(positions(items).map((p) => p.row)).toEqual(good);
		expect(problems(items)).toEqual(
			bad.map((row) => ({ row, column: 'lat', message: 'Latitude 91 is outside -90 to 90.' }))
		);
		expect(positions(items)[4321]).toEqual({
			row: good[4321],
			time: Date.UTC(2024, 0, 1) + 4327 * 60_000,
			lat: (4327 % 1800) / 20 - 45,
			lon: (4327 % 3600) / 10 - 180,
			lc: 'G3210ABZ'[4327 % 8],
			semiMajorM: null,
			semiMinorM: null,
			orientationDeg: null,
			errorRadiusM: null
		});
	});

	it('stops reading the source when the caller stops early', async () => {
		const { source, state } = countingSource(100_000);
		let seen = 0;
		for await (const item of parsePositions(source, {
			format: 'csv',
			mapping: { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' },
			now: NOW
		})) {
			expect(item.ok).toBe(true);
			if (++seen === 3) break;
		}
		await new Promise((resolve) => setImmediate(resolve));
		expect(state.finished).toBe(true);
		expect(state.pulled).toBeLessThan(5_000);
	});
});

describe('previewCsv', () => {
	it('returns the delimiter, header, first rows and a suggested mapping', async () => {
		const text =
			'\uFEFFDate Time;Latitude;Longitude;Location class;HDOP\r\n' +
			'2024-03-01 12:00:00;1,5;2;A;0.9\r\n' +
			'\r\n' +
			'2024-03-01 13:00:00;1.6;2;B;1.1\r\n' +
			'2024-03-01 14:00:00;1.7;2;B;1.1\r\n';
		expect(await previewCsv(streamOf(text), 2)).toEqual({
			delimiter: ';',
			headers: ['Date Time', 'Latitude', 'Longitude', 'Location class', 'HDOP'],
			rows: [
				['2024-03-01 12:00:00', '1,5', '2', 'A', '0.9'],
				['2024-03-01 13:00:00', '1.6', '2', 'B', '1.1']
			],
			suggested: { time: 'Date Time', lat: 'Latitude', lon: 'Longitude', lc: 'Location class' }
		});
	});

	it('reads only the beginning of a large file', async () => {
		const { source, state } = countingSource(100_000);
		const preview = await previewCsv(source);
		expect(preview.rows).toHaveLength(10);
		expect(preview.rows[9]).toEqual(['2024-03-01 12:00:00', '9', '0', 'A']);
		await new Promise((resolve) => setImmediate(resolve));
		expect(state.finished).toBe(true);
		expect(state.pulled).toBeLessThan(5_000);
	});

	it('refuses duplicate header names', async () => {
		await expect(previewCsv(streamOf('time\tlat\tlon\tTIME\n'))).rejects.toThrow(
			'The header row names “TIME” twice (columns 1 and 4); column names must be distinct.'
		);
	});
});

describe('sniffDelimiter', () => {
	it('counts outside quotes and breaks ties towards the comma', () => {
		expect(sniffDelimiter('a;b;c')).toBe(';');
		expect(sniffDelimiter('"a,1";"b,2";c')).toBe(';');
		expect(sniffDelimiter('a\tb,c\td')).toBe('\t');
		expect(sniffDelimiter('a,b;c')).toBe(',');
		expect(sniffDelimiter('abc')).toBeNull();
	});
});
