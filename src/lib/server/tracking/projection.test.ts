import { describe, expect, it } from 'vitest';
import { cleanTrack } from './clean';
import { geodesicDistance, trackLength } from './geodesy';
import {
	CELL_SIZES,
	METRES_PER_MILE,
	cellCentre,
	cellOf,
	distanceRounded,
	publicProjection,
	snapToCell,
	toGeoJSON,
	type CellDeg,
	type JourneyGeoJSON,
	type PublicJourney
} from './projection';
import { syntheticTrack } from './synthetic';
import type { Fix } from './types';

const DAY = 86_400_000;
const NOW = Date.UTC(2024, 5, 15, 12, 0, 0);
const CUTOFF = NOW - 7 * DAY;

let seq = 0;
function fix(time: number, lat: number, lon: number): Fix {
	return { id: `f${++seq}`, time, lat, lon, lc: 'G' };
}
const day = (d: number, hour = 12) => Date.UTC(2024, 4, d, hour);

/** mulberry32: a tiny seeded PRNG so the property test is reproducible. */
function prng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/**
 * A value is a cell-centre coordinate when 2k·value is an odd integer (k = cells per degree):
 * centres are (2·index + 1 − 180k) / 2k and 180k, 360k are even. Integer arithmetic, no tolerance
 * beyond the float error of one multiplication.
 */
function onCentreGrid(value: number, cellDeg: CellDeg): boolean {
	const twoK = 2 * Math.round(1 / cellDeg);
	const n = Math.round(value * twoK);
	return Math.abs(value * twoK - n) < 1e-9 && Math.abs(n % 2) === 1;
}

function expectOnGrid(lat: number, lon: number, cellDeg: CellDeg) {
	expect(onCentreGrid(lat, cellDeg), `lat ${lat} off the ${cellDeg}° grid`).toBe(true);
	expect(onCentreGrid(lon, cellDeg), `lon ${lon} off the ${cellDeg}° grid`).toBe(true);
	expect(Math.abs(lat)).toBeLessThan(90);
	expect(Math.abs(lon)).toBeLessThan(180);
}

function allPositions(geo: JourneyGeoJSON): { position: [number, number]; cut: boolean }[] {
	const out: { position: [number, number]; cut: boolean }[] = [];
	for (const f of geo.features) {
		const g = f.geometry;
		if (g.type === 'Point') out.push({ position: g.coordinates, cut: false });
		else if (g.type === 'LineString')
			for (const p of g.coordinates) out.push({ position: p, cut: false });
		else
			for (const part of g.coordinates) for (const p of part) out.push({ position: p, cut: true });
	}
	return out;
}

describe('publicProjection: the delay cutoff', () => {
	it('shows a fix one second older than now − 7 days and withholds one a second newer', () => {
		const older = fix(CUTOFF - 1000, 17.93, -66.61);
		const newer = fix(CUTOFF + 1000, 18.43, -66.11);
		const j = publicProjection([older, newer], { now: NOW });
		expect(j.points).toHaveLength(1);
		expect(j.points[0]).toMatchObject({ lat: 17.95, lon: -66.65 });
		expect(j.lastPublicDate).toBe('2024-06-08');
		expect(j.cutoffDate).toBe('2024-06-08');
		expect(j.distanceMetres).toBe(0);
		expect(JSON.stringify(j)).not.toContain('18.45');
	});

	it('includes a fix exactly at the cutoff', () => {
		const j = publicProjection([fix(CUTOFF, 10.01, 10.01)], { now: NOW });
		expect(j.points).toHaveLength(1);
	});

	it('refuses a delay under 7 days and honours a longer one', () => {
		const fixes = [fix(NOW - 8 * DAY, 10.01, 10.01), fix(NOW - 9 * DAY, 11.01, 10.01)];
		expect(() => publicProjection(fixes, { now: NOW, delayDays: 6 })).toThrow(RangeError);
		expect(() => publicProjection(fixes, { now: NOW, delayDays: 6.99 })).toThrow(/at least 7/);
		expect(() => publicProjection(fixes, { now: NOW, delayDays: Number.NaN })).toThrow();
		expect(publicProjection(fixes, { now: NOW }).points).toHaveLength(2);
		const later = publicProjection(fixes, { now: NOW, delayDays: 8.5 });
		expect(later.points).toEqual([
			{ lat: 11.05, lon: 10.05, firstDate: '2024-06-06', lastDate: '2024-06-06' }
		]);
		expect(later.delayDays).toBe(8.5);
	});

	it('refuses a cell size that is not offered', () => {
		expect(() => publicProjection([], { now: NOW, cellDeg: 0.01 as CellDeg })).toThrow(/cellDeg/);
	});

	it('ignores fixes before the release', () => {
		const released = day(10);
		const j = publicProjection(
			[fix(day(9), 25.01, -80.01), fix(day(11), 25.51, -79.51), fix(day(12), 26.01, -79.01)],
			{ now: NOW, releasedAt: released }
		);
		expect(j.points.map((p) => p.firstDate)).toEqual(['2024-05-11', '2024-05-12']);
		expect(j.distanceMetres).toBe(
			geodesicDistance({ lat: 25.51, lon: -79.51 }, { lat: 26.01, lon: -79.01 })
		);
	});

	it('is empty but well formed when nothing is public yet', () => {
		const j = publicProjection([fix(NOW - DAY, 10, 10)], { now: NOW });
		expect(j).toMatchObject({ points: [], lastPublicDate: null, distanceMetres: 0, cellDeg: 0.1 });
		expect(toGeoJSON(j).features).toEqual([]);
	});
});

describe('publicProjection: merging consecutive fixes in one cell', () => {
	it('merges three fixes in one cell, then starts a new point in the next cell', () => {
		const j = publicProjection(
			[
				fix(day(1), 17.91, -66.69),
				fix(day(2, 3), 17.94, -66.62),
				fix(day(3, 22), 17.99, -66.61),
				fix(day(5), 18.02, -66.61)
			],
			{ now: NOW }
		);
		expect(j.points).toEqual([
			{ lat: 17.95, lon: -66.65, firstDate: '2024-05-01', lastDate: '2024-05-03' },
			{ lat: 18.05, lon: -66.65, firstDate: '2024-05-05', lastDate: '2024-05-05' }
		]);
	});

	it('merges only consecutive fixes: A, B, A gives three points', () => {
		const j = publicProjection(
			[fix(day(1), 17.91, -66.69), fix(day(2), 18.02, -66.61), fix(day(3), 17.93, -66.64)],
			{ now: NOW }
		);
		expect(j.points.map((p) => [p.lat, p.firstDate])).toEqual([
			[17.95, '2024-05-01'],
			[18.05, '2024-05-02'],
			[17.95, '2024-05-03']
		]);
	});

	it('orders fixes by time whatever order they arrive in', () => {
		const a = fix(day(1), 17.91, -66.69);
		const b = fix(day(2), 18.02, -66.61);
		const c = fix(day(3), 17.93, -66.64);
		expect(publicProjection([c, a, b], { now: NOW })).toEqual(
			publicProjection([a, b, c], { now: NOW })
		);
	});
});

describe('publicProjection: distance', () => {
	const track = [
		fix(day(1), 17.912345, -66.698765),
		fix(day(2), 17.941234, -66.621234),
		fix(day(3), 17.987654, -66.612345),
		fix(day(6), 18.523456, -65.234567),
		fix(day(20), 21.345678, -60.123456),
		fix(NOW - DAY, 25.0, -55.0) // withheld by the delay
	];

	it('is the sum of geodesicDistance over the public cleaned fixes', () => {
		const j = publicProjection(track, { now: NOW });
		let expected = 0;
		for (let i = 1; i < 5; i++) expected += geodesicDistance(track[i - 1], track[i]);
		expect(j.distanceMetres).toBe(expected);
		expect(j.distanceMetres).toBeGreaterThan(700_000);
	});

	it('is measured on the cleaned track, so it does not depend on the cell size', () => {
		const d = CELL_SIZES.map(
			(cellDeg) => publicProjection(track, { now: NOW, cellDeg }).distanceMetres
		);
		expect(new Set(d).size).toBe(1);
		// Zig-zagging inside one cell is real swimming: the coarse line has length 0.
		const zigzag = [
			fix(day(1), 17.91, -66.69),
			fix(day(2), 17.99, -66.61),
			fix(day(3), 17.91, -66.69)
		];
		const j = publicProjection(zigzag, { now: NOW });
		expect(j.points).toHaveLength(1);
		expect(trackLength(j.points)).toBe(0);
		expect(j.distanceMetres).toBeGreaterThan(20_000);
	});

	it('is rounded to 10 km or 5 mi for readers (1 mi = 1609.344 m exactly)', () => {
		expect(METRES_PER_MILE).toBe(1609.344);
		expect(distanceRounded(1_234_567, 'km')).toBe(1230);
		expect(distanceRounded(1_236_000, 'km')).toBe(1240);
		expect(distanceRounded(4_999, 'km')).toBe(0);
		expect(distanceRounded(5_001, 'km')).toBe(10);
		expect(distanceRounded(100 * 1609.344, 'mi')).toBe(100);
		expect(distanceRounded(102.4 * 1609.344, 'mi')).toBe(100);
		expect(distanceRounded(102.6 * 1609.344, 'mi')).toBe(105);
		// The trade's "over 2,300 miles": 2,312 mi shows as 2,310, 3,720.8 km as 3,720.
		expect(distanceRounded(2312 * 1609.344, 'mi')).toBe(2310);
		expect(distanceRounded({ distanceMetres: 2312 * 1609.344 }, 'km')).toBe(3720);
	});
});

describe('grid cells', () => {
	it('snaps to the centre of 0.1°, 0.25°, 0.5° and 1° cells', () => {
		expect(snapToCell(17.33, -66.67, 0.1)).toEqual({ lat: 17.35, lon: -66.65 });
		expect(snapToCell(17.33, -66.67, 0.25)).toEqual({ lat: 17.375, lon: -66.625 });
		expect(snapToCell(17.33, -66.67, 0.5)).toEqual({ lat: 17.25, lon: -66.75 });
		expect(snapToCell(17.33, -66.67, 1)).toEqual({ lat: 17.5, lon: -66.5 });
	});

	it('handles the southern and western hemispheres and cell edges', () => {
		expect(snapToCell(-0.05, -0.05, 0.1)).toEqual({ lat: -0.05, lon: -0.05 });
		expect(snapToCell(-0.0001, -0.0001, 0.1)).toEqual({ lat: -0.05, lon: -0.05 });
		expect(snapToCell(0, 0, 0.1)).toEqual({ lat: 0.05, lon: 0.05 });
		// an edge belongs to the cell north/east of it, for the decimal value as written
		expect(snapToCell(-0.1, 17.9, 0.1)).toEqual({ lat: -0.05, lon: 17.95 });
		expect(snapToCell(-0.1000001, 17.8999999, 0.1)).toEqual({ lat: -0.15, lon: 17.85 });
		expect(snapToCell(-33.87, 151.21, 0.1)).toEqual({ lat: -33.85, lon: 151.25 });
		expect(snapToCell(-33.87, -151.21, 0.25)).toEqual({ lat: -33.875, lon: -151.125 });
	});

	it('puts lat 90 and lon 180 into the last cells and −90 / −180 into the first', () => {
		expect(snapToCell(90, 180, 0.1)).toEqual({ lat: 89.95, lon: 179.95 });
		expect(snapToCell(-90, -180, 0.1)).toEqual({ lat: -89.95, lon: -179.95 });
		expect(snapToCell(90, 180, 1)).toEqual({ lat: 89.5, lon: 179.5 });
		expect(() => snapToCell(90.01, 0, 0.1)).toThrow(RangeError);
		expect(() => snapToCell(0, -180.5, 0.1)).toThrow(RangeError);
		expect(() => snapToCell(Number.NaN, 0, 0.1)).toThrow(RangeError);
	});

	it('treats both sides of the antimeridian as separate, correct cells', () => {
		expect(snapToCell(10.02, 179.97, 0.1)).toEqual({ lat: 10.05, lon: 179.95 });
		expect(snapToCell(10.02, -179.97, 0.1)).toEqual({ lat: 10.05, lon: -179.95 });
		expect(snapToCell(10.02, 179.6, 0.5)).toEqual({ lat: 10.25, lon: 179.75 });
		expect(snapToCell(10.02, -179.6, 0.5)).toEqual({ lat: 10.25, lon: -179.75 });
	});
});

describe('toGeoJSON (RFC 7946)', () => {
	it('gives a FeatureCollection with a [lon, lat] line and one dated Point per cell visit', () => {
		const j = publicProjection(
			[fix(day(1), 17.91, -66.69), fix(day(2), 17.94, -66.62), fix(day(5), 18.02, -66.61)],
			{ now: NOW }
		);
		const geo = toGeoJSON(j);
		expect(geo.type).toBe('FeatureCollection');
		expect(geo.properties).toMatchObject({ cellDeg: 0.1, distanceKm: distanceRounded(j, 'km') });
		expect(geo.features[0].geometry).toEqual({
			type: 'LineString',
			coordinates: [
				[-66.65, 17.95],
				[-66.65, 18.05]
			]
		});
		expect(geo.features.slice(1)).toEqual([
			{
				type: 'Feature',
				geometry: { type: 'Point', coordinates: [-66.65, 17.95] },
				properties: { kind: 'cell', firstDate: '2024-05-01', lastDate: '2024-05-02' }
			},
			{
				type: 'Feature',
				geometry: { type: 'Point', coordinates: [-66.65, 18.05] },
				properties: { kind: 'cell', firstDate: '2024-05-05', lastDate: '2024-05-05' }
			}
		]);
	});

	it('has no line for a single cell', () => {
		const geo = toGeoJSON(publicProjection([fix(day(1), 1.01, 1.01)], { now: NOW }));
		expect(geo.features.map((f) => f.geometry.type)).toEqual(['Point']);
	});

	it('cuts the line at the antimeridian into a MultiLineString (RFC 7946 §3.1.9)', () => {
		const east = publicProjection(
			[
				fix(day(1), 10.02, 179.93),
				fix(day(2), 10.03, 179.97),
				fix(day(3), 10.23, -179.98),
				fix(day(4), 10.24, -179.92)
			],
			{ now: NOW }
		);
		expect(east.points.map((p) => [p.lon, p.lat])).toEqual([
			[179.95, 10.05],
			[-179.95, 10.25]
		]);
		// short hop across 180°, not most of the way around the world
		expect(east.distanceMetres).toBeLessThan(40_000);
		expect(toGeoJSON(east).features[0].geometry).toEqual({
			type: 'MultiLineString',
			coordinates: [
				[
					[179.95, 10.05],
					[180, 10.15]
				],
				[
					[-180, 10.15],
					[-179.95, 10.25]
				]
			]
		});

		const west = publicProjection(
			[fix(day(1), -20.01, -179.51), fix(day(2), -20.01, 179.51), fix(day(3), -20.01, 178.51)],
			{ now: NOW, cellDeg: 1 }
		);
		expect(toGeoJSON(west).features[0].geometry).toEqual({
			type: 'MultiLineString',
			coordinates: [
				[
					[-179.5, -20.5],
					[-180, -20.5]
				],
				[
					[180, -20.5],
					[179.5, -20.5],
					[178.5, -20.5]
				]
			]
		});
	});

	it('cuts only steps that go the short way across 180°', () => {
		const j = publicProjection([fix(day(1), 0.01, -170.01), fix(day(2), 0.01, 170.01)], {
			now: NOW,
			cellDeg: 1
		});
		// 340° of longitude east-west is the short way across 180°, so this one IS cut
		expect(toGeoJSON(j).features[0].geometry.type).toBe('MultiLineString');
		const k = publicProjection([fix(day(1), 0.01, -90.01), fix(day(2), 0.01, 80.01)], {
			now: NOW,
			cellDeg: 1
		});
		expect(toGeoJSON(k).features[0].geometry.type).toBe('LineString');
	});
});

describe('leak check: random tracks (seeded)', () => {
	const random = prng(20240615);
	const decimals = (x: number, d: number) => Number(x.toFixed(d));

	function randomTrack(): { fixes: Fix[]; now: number } {
		const n = 2 + Math.floor(random() * 60);
		let lat = -75 + random() * 150;
		let lon = -180 + random() * 360;
		let t = Date.UTC(2023, 0, 1) + Math.floor(random() * 365 * DAY);
		const fixes: Fix[] = [];
		for (let i = 0; i < n; i++) {
			const places = 4 + Math.floor(random() * 3); // raw fixes carry 4–6 decimals
			fixes.push(fix(t, decimals(lat, places), decimals(lon, places)));
			t += Math.floor(random() * 36 * 3_600_000) + 60_000;
			lat = Math.max(-89.9, Math.min(89.9, lat + (random() - 0.5) * 0.6));
			lon += (random() - 0.5) * 0.6;
			if (lon > 180) lon -= 360;
			if (lon < -180) lon += 360;
		}
		// now falls between 6 days before and 6 days after the last fix, so cutoffs cut into the track
		return { fixes, now: t + Math.floor((random() * 12 - 6) * DAY) };
	}

	/** `rendering` appears as a number in `text` (not as the tail of a longer number). */
	function appearsAsNumber(text: string, rendering: string): boolean {
		const escaped = rendering.replace('.', '\\.');
		return new RegExp(`(?<![0-9.])${escaped}`).test(text);
	}

	it('never publishes an off-grid coordinate, a time, a late date or a raw coordinate', () => {
		let checkedPoints = 0;
		let withheld = 0;
		for (let run = 0; run < 300; run++) {
			const { fixes, now } = randomTrack();
			const cellDeg = CELL_SIZES[Math.floor(random() * CELL_SIZES.length)];
			const delayDays = 7 + Math.floor(random() * 8);
			const j: PublicJourney = publicProjection(fixes, { now, cellDeg, delayDays });
			const geo = toGeoJSON(j);
			const text = JSON.stringify(j) + '\n' + JSON.stringify(geo);

			for (const p of j.points) expectOnGrid(p.lat, p.lon, cellDeg);
			for (const { position, cut } of allPositions(geo)) {
				const [lon, lat] = position;
				expect(onCentreGrid(lat, cellDeg)).toBe(true);
				if (cut && Math.abs(lon) === 180) continue; // antimeridian cut vertex
				expectOnGrid(lat, lon, cellDeg);
			}
			checkedPoints += j.points.length;

			expect(text).not.toMatch(/\d{2}:\d{2}|T\d{2}|Z"/);
			for (const date of text.match(/\d{4}-\d{2}-\d{2}/g) ?? []) {
				expect(date <= j.cutoffDate).toBe(true);
			}
			const cutoff = now - delayDays * DAY;
			withheld += fixes.filter((f) => f.time > cutoff).length;

			for (const f of fixes) {
				for (const value of [f.lat, f.lon]) {
					const abs = Math.abs(value);
					for (const rendering of [abs.toFixed(3), abs.toFixed(4), String(abs)]) {
						// A rendering that is itself a cell centre (e.g. 17.125 on the 0.25° grid) is
						// indistinguishable from the public value; the grid check above covers it.
						if (onCentreGrid(Number(rendering), cellDeg)) continue;
						expect(appearsAsNumber(text, rendering), `${rendering} leaked`).toBe(false);
					}
				}
			}
		}
		// the generator really exercised both sides of the cutoff
		expect(checkedPoints).toBeGreaterThan(2000);
		expect(withheld).toBeGreaterThan(1000);
	});

	it('the leak check itself can fail: a raw coordinate is found when present', () => {
		const text = JSON.stringify({ lat: 17.95312, d: 1234517.953 });
		expect(appearsAsNumber(text, '17.953')).toBe(true);
		expect(appearsAsNumber(JSON.stringify({ d: 1234517.953 }), '17.953')).toBe(false);
		expect(onCentreGrid(17.95, 0.1)).toBe(true);
		expect(onCentreGrid(17.9, 0.1)).toBe(false);
		expect(onCentreGrid(17.953, 0.1)).toBe(false);
		expect(onCentreGrid(17.125, 0.25)).toBe(true);
		expect(onCentreGrid(17.25, 0.25)).toBe(false);
	});
});

describe('publicProjection: the fast path gives the same journey as the plain rule', () => {
	/**
	 * The projection done the plain way: filter, sort, geodesicDistance for every public leg,
	 * a date string per fix and centres rounded with Number.prototype.toFixed (ECMA-262 §21.1.3.3:
	 * the decimal nearest the value). The module skips the sort for a track in time order, makes
	 * one date string per day, computes centres without strings and can take the leg lengths
	 * from cleanTrack; none of that may change a bit of the result.
	 */
	function referenceProjection(
		cleaned: readonly Fix[],
		now: number,
		delayDays: number,
		cellDeg: CellDeg,
		releasedAt?: number
	): PublicJourney {
		const cutoff = now - delayDays * DAY;
		const visible = cleaned
			.filter((f) => f.time <= cutoff && (releasedAt === undefined || f.time >= releasedAt))
			.sort((a, b) => a.time - b.time);
		const k = Math.round(1 / cellDeg);
		const d = cellDeg === 0.25 ? 3 : 2;
		const centre = (i: number, offset: number) =>
			Number(((2 * i + 1 - offset * k) / (2 * k)).toFixed(d));
		const date = (ms: number) => new Date(ms).toISOString().slice(0, 10);
		let distanceMetres = 0;
		const points: PublicJourney['points'] = [];
		let last = '';
		visible.forEach((f, i) => {
			if (i > 0) distanceMetres += geodesicDistance(visible[i - 1], f);
			const { row, col } = cellOf(f.lat, f.lon, cellDeg);
			const key = `${row}/${col}`;
			if (key === last) points[points.length - 1].lastDate = date(f.time);
			else {
				points.push({
					lat: centre(row, 180),
					lon: centre(col, 360),
					firstDate: date(f.time),
					lastDate: date(f.time)
				});
				last = key;
			}
		});
		return {
			cellDeg,
			delayDays,
			cutoffDate: date(cutoff),
			lastPublicDate: visible.length ? date(visible[visible.length - 1].time) : null,
			distanceMetres,
			points
		};
	}

	const start = Date.UTC(2024, 0, 1);
	const cases = [1, 2, 3, 4, 5, 6].map((seed) => {
		const { fixes } = syntheticTrack({
			seed,
			start: { lat: -40 + seed * 12, lon: 170 + seed * 0.5 }, // some cross the antimeridian
			startTime: start,
			days: 90,
			fixesPerDay: 6,
			headingDeg: seed * 60,
			speedKmh: 1.5,
			spikeFraction: 0.05,
			zFraction: 0.02
		});
		return { seed, fixes, clean: cleanTrack(fixes) };
	});

	it('cleanTrack hands on one leg length per pair of kept fixes, equal to geodesicDistance', () => {
		for (const { clean } of cases) {
			expect(clean.rejected.some((r) => r.reason === 'speed')).toBe(true);
			expect(clean.legMetres).toHaveLength(clean.kept.length - 1);
			clean.legMetres.forEach((leg, i) =>
				expect(leg).toBe(geodesicDistance(clean.kept[i], clean.kept[i + 1]))
			);
		}
	});

	it('is identical with and without the leg lengths, and to the plain rule', () => {
		const random = prng(77);
		let runs = 0;
		for (const { fixes, clean } of cases) {
			for (let round = 0; round < 6; round++) {
				const cellDeg = CELL_SIZES[round % CELL_SIZES.length];
				const delayDays = 7 + Math.floor(random() * 5);
				// the cutoff and the release fall inside the track, so both ends are cut
				const now = start + Math.floor((20 + random() * 80) * DAY);
				const releasedAt = round % 2 === 0 ? undefined : start + Math.floor(random() * 15 * DAY);
				const options = { now, delayDays, cellDeg, releasedAt };
				const expected = referenceProjection(clean.kept, now, delayDays, cellDeg, releasedAt);
				const plain = publicProjection(clean.kept, options);
				const reused = publicProjection(clean.kept, { ...options, legMetres: clean.legMetres });
				expect(plain).toEqual(expected);
				expect(reused).toEqual(expected);
				expect(reused.distanceMetres).toBe(expected.distanceMetres);
				expect(plain.distanceMetres).toBe(expected.distanceMetres);
				// out of time order: the plain path sorts and must still agree
				const shuffled = [...fixes].reverse();
				expect(publicProjection(shuffled, options)).toEqual(
					referenceProjection(shuffled, now, delayDays, cellDeg, releasedAt)
				);
				runs++;
			}
		}
		expect(runs).toBe(36);
	});

	it('sums exactly the given legs of the public run', () => {
		const track = [1, 2, 3, 4, 5, 6].map((d) => fix(day(d), 10 + d * 0.2, 20));
		// powers of two: the sum says which legs were added
		const legMetres = [1, 2, 4, 8, 16];
		const j = publicProjection(track, {
			now: day(5) + 7 * DAY, // fixes of days 1–5 are public
			releasedAt: day(2), // …from day 2
			legMetres
		});
		expect(j.distanceMetres).toBe(2 + 4 + 8);
	});

	it('refuses leg lengths that cannot belong to the track, with a clear message', () => {
		const track = [fix(day(1), 10, 20), fix(day(2), 10.5, 20), fix(day(3), 11, 20)];
		expect(() => publicProjection(track, { now: NOW, legMetres: [1] })).toThrow(
			/one length per leg \(2\), got 1/
		);
		expect(() =>
			publicProjection([track[1], track[0], track[2]], { now: NOW, legMetres: [1, 2] })
		).toThrow(/time order/);
		expect(() => publicProjection(track, { now: NOW, legMetres: [1, Number.NaN] })).toThrow(
			/legMetres\[1\] is not a length/
		);
		expect(() => publicProjection(track, { now: NOW, legMetres: [-1, 2] })).toThrow(RangeError);
		expect(publicProjection([], { now: NOW, legMetres: [] }).distanceMetres).toBe(0);
	});

	it('dates change exactly at UTC midnight, before 1970 too', () => {
		const at = (ms: number) => ({ id: `m${ms}`, time: ms, lat: 0.01, lon: 0.01, lc: 'G' as const });
		for (const midnight of [Date.UTC(2024, 2, 1), 0]) {
			const j = publicProjection([at(midnight - 1), at(midnight), at(midnight + 1)], {
				now: midnight + 30 * DAY
			});
			expect(j.points).toEqual([
				{
					lat: 0.05,
					lon: 0.05,
					firstDate: new Date(midnight - 1).toISOString().slice(0, 10),
					lastDate: new Date(midnight).toISOString().slice(0, 10)
				}
			]);
			expect(j.points[0].firstDate).not.toBe(j.points[0].lastDate);
		}
	});

	it('every cell centre equals the decimal value rounded with toFixed (all cells, all sizes)', () => {
		for (const cellDeg of CELL_SIZES) {
			const k = Math.round(1 / cellDeg);
			const d = cellDeg === 0.25 ? 3 : 2;
			for (let i = 0; i < 360 * k; i++) {
				const row = Math.min(i, 180 * k - 1);
				const { lat, lon } = cellCentre(row, i, cellDeg);
				expect(lon).toBe(Number(((2 * i + 1 - 360 * k) / (2 * k)).toFixed(d)));
				expect(lat).toBe(Number(((2 * row + 1 - 180 * k) / (2 * k)).toFixed(d)));
			}
		}
		expect(cellCentre(0, 0, 0.1)).toEqual({ lat: -89.95, lon: -179.95 });
		expect(cellCentre(1079, 1133, 0.1)).toEqual({ lat: 17.95, lon: -66.65 });
	});
});
