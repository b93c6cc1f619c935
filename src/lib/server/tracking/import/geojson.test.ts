import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { parsePositions } from './index';
import { collect, NOW, positions, problems, streamOf } from './test-support';
import { ImportFileError } from './types';

function parse(document: unknown, extra: object = {}) {
	const text = typeof document === 'string' ? document : JSON.stringify(document);
	return collect(parsePositions(streamOf(text), { format: 'geojson', now: NOW, ...extra }));
}

function point(lon: unknown, lat: unknown, properties: unknown) {
	return { type: 'Feature', geometry: { type: 'Point', coordinates: [lon, lat] }, properties };
}

function collection(features: unknown[]) {
	return { type: 'FeatureCollection', features };
}

describe('parsePositions, GeoJSON', () => {
	it('reads Point features with time, class and error properties', async () => {
		const items = await parse(
			collection([
				point(130.25, -12.5, {
					timestamp: '2024-03-01T14:00:00+02:00',
					lc: 'a',
					semi_major: 1500,
					semi_minor: '300',
					orientation: 45,
					name: 'ignored'
				}),
				{ ...point(-179.5, 0.25, { Time: '2024-03-01 13:00:00', Location_Class: '3' }), id: 9 },
				{
					type: 'Feature',
					geometry: { type: 'Point', coordinates: [1, 2, -5] },
					properties: { datetime: '2024-03-01 14:00:00', quality: 'G', error_radius: 12 }
				},
				point(1, 2, { date: '2024-03-01 15:00:00', class: 'B' })
			])
		);
		expect(items).toEqual([
			{
				ok: true,
				position: {
					row: 1,
					time: Date.UTC(2024, 2, 1, 12),
					lat: -12.5,
					lon: 130.25,
					lc: 'A',
					semiMajorM: 1500,
					semiMinorM: 300,
					orientationDeg: 45,
					errorRadiusM: null
				}
			},
			{
				ok: true,
				position: expect.objectContaining({ row: 2, lat: 0.25, lon: -179.5, lc: '3' })
			},
			{
				ok: true,
				position: expect.objectContaining({ row: 3, lat: 2, lon: 1, lc: 'G', errorRadiusM: 12 })
			},
			{
				ok: true,
				position: expect.objectContaining({ row: 4, time: Date.UTC(2024, 2, 1, 15), lc: 'B' })
			}
		]);
	});

	it('finds type and features wherever they are, and skips other members', async () => {
		const text =
			'\uFEFF{"bbox": [0, 0, 1, 1], "features": [' +
			JSON.stringify(point(1, 2, { time: '2024-03-01 12:00:00', lc: '2' })) +
			'], "crs": {"type": "name", "properties": {"features": []}}, "type": "FeatureCollection"}';
		expect(positions(await parse(text))).toEqual([
			expect.objectContaining({ row: 1, lat: 2, lon: 1, lc: '2' })
		]);
	});

	it('reports each bad feature with its number and the property at fault', async () => {
		const items = await parse(
			collection([
				{
					type: 'Feature',
					geometry: { type: 'MultiPoint', coordinates: [[1, 2]] },
					properties: {}
				},
				{ type: 'Feature', geometry: { type: 'LineString', coordinates: [] }, properties: null },
				{ type: 'Feature', geometry: null, properties: { time: '2024-03-01 12:00:00', lc: 'A' } },
				point('12.5', 200, { timestamp: '2024-03-01T12:00:00', lc: 'X', orientation: -1 }),
				{ type: 'Feature', geometry: { type: 'Point', coordinates: [1] }, properties: 'none' },
				'not a feature',
				{ type: 'Thing', geometry: { type: 'Point', coordinates: [1, 2] }, properties: {} }
			])
		);
		expect(items.map((item) => item.ok)).toEqual([false, false, false, false, false, false, false]);
		expect(problems(items)).toEqual([
			{
				row: 1,
				column: 'geometry.type',
				message:
					'MultiPoint geometries are not accepted; give each fix its own Point feature with its own time.'
			},
			{
				row: 1,
				column: 'timestamp',
				message:
					'No time given; add a timestamp, time, datetime or date property such as "2024-03-01T12:00:00Z".'
			},
			{
				row: 1,
				column: 'lc',
				message:
					'No location class; add an lc, location_class, class or quality property, or choose a default class.'
			},
			{
				row: 2,
				column: 'geometry.type',
				message: '“LineString” geometries are not accepted; each fix must be a Point.'
			},
			{
				row: 2,
				column: 'timestamp',
				message:
					'No time given; add a timestamp, time, datetime or date property such as "2024-03-01T12:00:00Z".'
			},
			{
				row: 2,
				column: 'lc',
				message:
					'No location class; add an lc, location_class, class or quality property, or choose a default class.'
			},
			{
				row: 3,
				column: 'geometry',
				message: 'The feature has no geometry; each fix needs a Point.'
			},
			{
				row: 4,
				column: 'geometry.coordinates[0]',
				message: 'The longitude “12.5” is not a JSON number; write it without quotes.'
			},
			{
				row: 4,
				column: 'timestamp',
				message:
					'“2024-03-01T12:00:00” has no time zone; add Z for UTC or an offset such as +02:00.'
			},
			{
				row: 4,
				column: 'geometry.coordinates[1]',
				message: 'Latitude 200 is outside -90 to 90.'
			},
			{
				row: 4,
				column: 'lc',
				message: '“X” is not a location class; expected one of G, 3, 2, 1, 0, A, B, Z.'
			},
			{ row: 4, column: 'orientation', message: 'Ellipse orientation must not be negative (-1).' },
			{
				row: 5,
				column: 'geometry.coordinates',
				message: 'Point coordinates must be [longitude, latitude].'
			},
			{ row: 5, column: 'properties', message: 'The properties are “none”; expected an object.' },
			{
				row: 5,
				column: 'timestamp',
				message:
					'No time given; add a timestamp, time, datetime or date property such as "2024-03-01T12:00:00Z".'
			},
			{
				row: 5,
				column: 'lc',
				message:
					'No location class; add an lc, location_class, class or quality property, or choose a default class.'
			},
			{
				row: 6,
				column: 'features',
				message: 'Feature 6 is “not a feature”, not a GeoJSON Feature object.'
			},
			{ row: 7, column: 'type', message: 'The type is “Thing”; expected “Feature”.' },
			{
				row: 7,
				column: 'timestamp',
				message:
					'No time given; add a timestamp, time, datetime or date property such as "2024-03-01T12:00:00Z".'
			},
			{
				row: 7,
				column: 'lc',
				message:
					'No location class; add an lc, location_class, class or quality property, or choose a default class.'
			}
		]);
	});

	it('uses the default class for features without one', async () => {
		const items = await parse(collection([point(1, 2, { time: '2024-03-01 12:00:00' })]), {
			defaultClass: 'G'
		});
		expect(positions(items)).toEqual([expect.objectContaining({ lc: 'G' })]);
	});

	it('refuses documents that are not a FeatureCollection', async () => {
		const cases: [string, string][] = [
			['', 'The file is empty.'],
			[
				JSON.stringify(point(1, 2, {})),
				'The file holds a single Feature; wrap it in {"type": "FeatureCollection", "features": [...]}.'
			],
			[
				'[1, 2]',
				'The file is not a GeoJSON FeatureCollection; expected {"type": "FeatureCollection", "features": [...]}.'
			],
			[
				'{"type": "Topology", "features": []}',
				"The file's type is “Topology”; expected a GeoJSON FeatureCollection."
			],
			['{"features": []}', 'The file has no "type" member; expected a GeoJSON FeatureCollection.'],
			['{"type": "FeatureCollection"}', 'The FeatureCollection has no "features" array.'],
			[
				'{"type": "FeatureCollection", "features": {}}',
				'The "features" member must be an array of Features.'
			],
			[
				'{"type": "FeatureCollection", "features": [}',
				'This is not valid JSON (Parser cannot parse input: expected a value).'
			],
			[
				'{"type": "FeatureCollection", "features": []} {}',
				'This is not valid JSON (Parser cannot parse input: unexpected characters).'
			]
		];
		for (const [text, message] of cases) {
			await expect(parse(text), text).rejects.toThrow(new ImportFileError(message));
		}
	});

	it('refuses an oversized feature instead of assembling it', async () => {
		const huge = `{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"raw":[${'0,'.repeat(100_000)}0]}}]}`;
		await expect(parse(huge)).rejects.toThrow(
			new ImportFileError(
				'Feature 1 is too large (over 100000 values); a position needs only a Point and a few properties.'
			)
		);
	});

	it('fails the whole file on a wrong type found after the features', async () => {
		const feature = JSON.stringify(point(1, 2, { time: '2024-03-01 12:00:00', lc: 'A' }));
		await expect(parse(`{"features": [${feature}], "type": "Feature"}`)).rejects.toThrow(
			new ImportFileError(
				'The file holds a single Feature; wrap it in {"type": "FeatureCollection", "features": [...]}.'
			)
		);
	});

	it('stops reading the source when the caller stops early', async () => {
		const state = { pulled: 0, finished: false };
		async function* text() {
			try {
				yield '{"type":"FeatureCollection","features":[';
				for (let i = 0; i < 100_000; i++) {
					state.pulled++;
					yield (
						(i ? ',' : '') + JSON.stringify(point(1, 2, { time: '2024-03-01 12:00:00', lc: 'A' }))
					);
				}
				yield ']}';
			} finally {
				state.finished = true;
			}
		}
		let seen = 0;
		for await (const item of parsePositions(Readable.from(text(), { objectMode: false }), {
			format: 'geojson',
			now: NOW
		})) {
			expect(item.ok).toBe(true);
			if (++seen === 3) break;
		}
		await new Promise((resolve) => setImmediate(resolve));
		expect(state.finished).toBe(true);
		expect(state.pulled).toBeLessThan(5_000);
	});

	it('assembles one feature at a time from a stream', async () => {
		const count = 20_000;
		async function* text() {
			yield '{"type":"FeatureCollection","features":[';
			for (let i = 0; i < count; i++) {
				const feature = point((i % 360) - 180, (i % 180) - 90, {
					timestamp: new Date(Date.UTC(2023, 0, 1) + i * 60_000).toISOString(),
					lc: 'G3210ABZ'[i % 8]
				});
				yield (i ? ',' : '') + JSON.stringify(feature);
			}
			yield ']}';
		}
		let n = 0;
		let last = null;
		for await (const item of parsePositions(Readable.from(text(), { objectMode: false }), {
			format: 'geojson',
			now: NOW
		})) {
			n++;
			if (item.ok) last = item.position;
		}
		expect(n).toBe(count);
		expect(last).toMatchObject({ row: count, lc: 'Z', lon: ((count - 1) % 360) - 180 });
	});
});
