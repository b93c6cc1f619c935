import { brotliDecompressSync, gunzipSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import type { RequestEvent } from '@sveltejs/kit';
import type { Position } from '$lib/map/types';
import { GET } from '../../../routes/map/land.json/+server';
import {
	landGeoJSON,
	landGeoJSONBody,
	landPolygons,
	preferredEncoding,
	unwrapRing
} from './basemap';

/** Even-odd ray casting over a polygon's rings (holes included). */
function inside(rings: readonly Position[][], lon: number, lat: number): boolean {
	let hit = false;
	for (const ring of rings) {
		for (let i = 0, j = ring.length - 1; i < ring.length; j = i++) {
			const [xi, yi] = ring[i];
			const [xj, yj] = ring[j];
			if (yi > lat !== yj > lat && lon < ((xj - xi) * (lat - yi)) / (yj - yi) + xi) hit = !hit;
		}
	}
	return hit;
}

/** Whether (lon, lat) is land, trying the point's copies a turn east and west too. */
function isLand(lon: number, lat: number): boolean {
	return landPolygons().some((p) =>
		[lon, lon - 360, lon + 360].some((x) => inside(p.rings, x, lat))
	);
}

function doubleArea(ring: readonly number[][]): number {
	let sum = 0;
	for (let i = 1; i < ring.length; i++) {
		sum += ring[i - 1][0] * ring[i][1] - ring[i][0] * ring[i - 1][1];
	}
	return sum;
}

describe('land for the maps (Natural Earth 1:50m from world-atlas)', () => {
	const land = landGeoJSON();

	it('has no ring with a longitude jump of more than 180° between neighbours (no streaks)', () => {
		let rings = 0;
		const jumps: string[] = [];
		for (const f of land.features) {
			for (const ring of f.geometry.coordinates) {
				rings++;
				for (let i = 1; i < ring.length; i++) {
					if (Math.abs(ring[i][0] - ring[i - 1][0]) > 180) {
						jumps.push(`${ring[i - 1]} → ${ring[i]}`);
					}
				}
			}
		}
		expect(rings).toBeGreaterThan(1000);
		expect(jumps).toEqual([]);
	});

	it('writes closed rings, exterior counter-clockwise and holes clockwise (RFC 7946 §3.1.6)', () => {
		for (const f of land.features) {
			f.geometry.coordinates.forEach((ring, i) => {
				expect(ring.length).toBeGreaterThanOrEqual(4);
				expect(ring[0]).toEqual(ring[ring.length - 1]);
				expect(doubleArea(ring) > 0).toBe(i === 0);
			});
		}
	});

	it('rounds coordinates to 4 decimals', () => {
		const sample = land.features.flatMap((f) => f.geometry.coordinates[0].slice(0, 20)).flat();
		for (const value of sample) expect(Number(value.toFixed(4))).toBe(value);
	});

	// Places whose land or sea is common knowledge, checked against the drawn polygons.
	it.each([
		['inland Florida', -81.7, 28.8, true],
		['inland Spain', -3.7, 40.4, true],
		['the Sahara', 10, 25, true],
		['Australia', 134, -25, true],
		['Antarctica near the pole (closed through the pole)', 30, -88, true],
		['Antarctica, East', 100, -75, true],
		['Chukotka, west of 180°', 175, 67, true],
		['Alaska', -150, 64, true],
		['Wrangel Island, which straddles 180°, east side', -179.5, 71.2, true],
		['Wrangel Island, west side', 179.7, 71.2, true],
		['the mid-Atlantic', -40, 30, false],
		['the Caspian Sea (a hole in Eurasia)', 51, 42, false],
		['the central Pacific', -150, 0, false],
		['the Southern Ocean', -120, -60, false],
		['the Bering Sea near 180°', 179.9, 58, false]
	])('%s is %s', (_name, lon, lat, expected) => {
		expect(isLand(lon, lat)).toBe(expected);
	});
});

describe('serving the land', () => {
	const text = (bytes: Uint8Array) => Buffer.from(bytes).toString('utf8');

	it('serialises each content coding once, each with its own strong ETag', async () => {
		const plain = await landGeoJSONBody('identity');
		const br = await landGeoJSONBody('br');
		const gz = await landGeoJSONBody('gzip');
		expect(await landGeoJSONBody('br')).toBe(br);
		for (const body of [plain, br, gz]) expect(body.etag).toMatch(/^"[A-Za-z0-9_-]{43}"$/);
		expect(new Set([plain.etag, br.etag, gz.etag]).size).toBe(3);
		expect(text(brotliDecompressSync(br.bytes))).toBe(text(plain.bytes));
		expect(text(gunzipSync(gz.bytes))).toBe(text(plain.bytes));
		expect(br.bytes.byteLength).toBeLessThan(plain.bytes.byteLength / 3);
	});

	// RFC 9110 §12.5.3: q=0 means "not acceptable", "*" stands for codings not named.
	it.each([
		[null, 'identity'],
		['', 'identity'],
		['gzip, deflate, br, zstd', 'br'],
		['gzip', 'gzip'],
		['br;q=0, gzip;q=0.5', 'gzip'],
		['*', 'br'],
		['*;q=0, gzip', 'gzip'],
		['identity', 'identity'],
		['BR;Q=1', 'br']
	])('Accept-Encoding %j → %s', (header, expected) => {
		expect(preferredEncoding(header)).toBe(expected);
	});

	const get = (headers: Record<string, string>) =>
		GET({
			request: new Request('http://localhost/map/land.json', { headers })
		} as unknown as RequestEvent<Record<string, never>, '/map/land.json'>);

	it('answers with cacheable GeoJSON, compressed when the client accepts it', async () => {
		const response = await get({ 'accept-encoding': 'gzip, br' });
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toBe('application/geo+json');
		expect(response.headers.get('content-encoding')).toBe('br');
		expect(response.headers.get('cache-control')).toBe('public, max-age=86400');
		expect(response.headers.get('vary')).toBe('Accept-Encoding');
		const body = new Uint8Array(await response.arrayBuffer());
		const land = JSON.parse(text(brotliDecompressSync(body)));
		expect(land.type).toBe('FeatureCollection');
		expect(response.headers.get('etag')).toBe((await landGeoJSONBody('br')).etag);

		const plain = await get({});
		expect(plain.headers.get('content-encoding')).toBeNull();
		expect(JSON.parse(await plain.text()).features.length).toBe(land.features.length);
	});

	it('answers 304 without a body when the client holds the same bytes', async () => {
		const { etag } = await landGeoJSONBody('gzip');
		const response = await get({ 'accept-encoding': 'gzip', 'if-none-match': etag });
		expect(response.status).toBe(304);
		expect(response.headers.get('etag')).toBe(etag);
		expect(response.headers.get('content-encoding')).toBeNull();
		expect(await response.text()).toBe('');
		// The Brotli tag does not validate the gzip representation.
		const other = await get({
			'accept-encoding': 'gzip',
			'if-none-match': (await landGeoJSONBody('br')).etag
		});
		expect(other.status).toBe(200);
	});
});

describe('unwrapping one ring', () => {
	it('keeps a ring that crosses 180° in one piece', () => {
		const ring: Position[] = [
			[179, 10],
			[-179, 10],
			[-179, 11],
			[179, 11],
			[179, 10]
		];
		expect(unwrapRing(ring)).toEqual([
			[179, 10],
			[181, 10],
			[181, 11],
			[179, 11],
			[179, 10]
		]);
	});

	it('closes a ring around the south pole along the bottom edge, without jumps', () => {
		const ring: Position[] = [
			[-180, -70],
			[-90, -72],
			[0, -70],
			[90, -72],
			[180, -70],
			[-180, -70]
		];
		const out = unwrapRing(ring);
		expect(out.at(-1)).toEqual([-180, -70]);
		expect(out.some(([, lat]) => lat === -90)).toBe(true);
		for (let i = 1; i < out.length; i++) {
			expect(Math.abs(out[i][0] - out[i - 1][0])).toBeLessThanOrEqual(180);
		}
	});
});
