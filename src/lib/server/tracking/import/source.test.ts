import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { parsePositions, previewCsv } from './index';
import { detectFormat, toReadable } from './source';
import { collect, NOW } from './test-support';
import { ImportFileError } from './types';

const bytes = (text: string) => new TextEncoder().encode(text);

describe('detectFormat', () => {
	it('goes by the content first, then by the name', () => {
		expect(detectFormat('fixes.csv', bytes('timestamp,lat,lon\n'))).toBe('csv');
		expect(detectFormat('fixes.tsv', bytes('timestamp\tlat\tlon\n'))).toBe('csv');
		expect(detectFormat('export', bytes('\uFEFFtimestamp;lat;lon\r\n'))).toBe('csv');
		expect(detectFormat('fixes.geojson', bytes('{"type":"FeatureCollection"'))).toBe('geojson');
		expect(detectFormat('fixes.csv', bytes('  {"type":"FeatureCollection"'))).toBe('geojson');
		expect(detectFormat('track.xml', bytes('<?xml version="1.0"?>\n<gpx version="1.1">'))).toBe(
			'gpx'
		);
		expect(detectFormat('track.GPX', bytes('<?xml version="1.0"?><!-- long comment -->'))).toBe(
			'gpx'
		);
		expect(detectFormat('tracks.gpx', bytes('<g:gpx xmlns:g="x">'))).toBe('gpx');
	});

	it('returns null for what none of the readers can take', () => {
		expect(detectFormat('places.kml', bytes('<?xml version="1.0"?><kml>'))).toBeNull();
		expect(detectFormat('sheet.xlsx', new Uint8Array([0x50, 0x4b, 0x03, 0x04, 0, 0]))).toBeNull();
		expect(detectFormat('notes.md', bytes('# Notes, and more'))).toBeNull();
		expect(detectFormat('notes', bytes('just words'))).toBeNull();
		expect(detectFormat('empty.csv', new Uint8Array())).toBe('csv');
		expect(detectFormat('empty', new Uint8Array())).toBeNull();
	});
});

describe('toReadable', () => {
	it('streams an uploaded File into the readers', async () => {
		const file = new File(['timestamp,lat,lon,lc\n2024-03-01 12:00:00,1,2,A\n'], 'fixes.csv');
		expect((await previewCsv(toReadable(file))).rows).toEqual([
			['2024-03-01 12:00:00', '1', '2', 'A']
		]);
		const blob = new Blob([
			'{"type":"FeatureCollection","features":[{"type":"Feature","geometry":{"type":"Point",',
			'"coordinates":[2,1]},"properties":{"time":"2024-03-01 12:00:00","lc":"A"}}]}'
		]);
		const items = await collect(
			parsePositions(toReadable(blob.stream()), { format: 'geojson', now: NOW })
		);
		expect(items).toMatchObject([{ ok: true, position: { lat: 1, lon: 2, lc: 'A' } }]);
	});
});

describe('a failing upload stream', () => {
	it('passes the stream error through instead of blaming the file', async () => {
		const starts = {
			csv: 'timestamp,lat,lon,lc\n2024-03-01 12:00:00,1,2,A\n',
			geojson: '{"type":"FeatureCollection","features":[',
			gpx: '<gpx><wpt lat="1" lon="2">'
		} as const;
		for (const format of ['csv', 'geojson', 'gpx'] as const) {
			const failure = new Error('connection reset');
			let sent = false;
			const source = new Readable({
				read() {
					if (sent) this.destroy(failure);
					else {
						sent = true;
						this.push(Buffer.from(starts[format]));
					}
				}
			});
			const run = collect(
				parsePositions(source, {
					format,
					now: NOW,
					mapping: { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' }
				})
			);
			await expect(run, format).rejects.toBe(failure);
			await expect(run).rejects.not.toBeInstanceOf(ImportFileError);
		}
	});
});
