import { describe, expect, it } from 'vitest';
import { geodesicDistance } from '$lib/server/tracking/geodesy';
import { publicProjection, toGeoJSON } from '$lib/server/tracking/projection';
import {
	boundsOf,
	cellSquare,
	cellsReachedBy,
	circleRing,
	continuousPath,
	journeyCells,
	journeyDates,
	recentre,
	unwrapLongitudes
} from './geometry';

const DAY = 86_400_000;
const t0 = Date.UTC(2025, 2, 1);

// Invented fixes across the antimeridian, one cell visit a day, two fixes on the third day.
const journey = toGeoJSON(
	publicProjection(
		[
			{ id: 'a', time: t0, lat: -16.53, lon: 179.52, lc: '2' },
			{ id: 'b', time: t0 + DAY, lat: -16.51, lon: 179.93, lc: '1' },
			{ id: 'c', time: t0 + 2 * DAY, lat: -16.46, lon: -179.88, lc: '3' },
			{ id: 'd', time: t0 + 2.2 * DAY, lat: -16.32, lon: -179.62, lc: 'A' },
			{ id: 'e', time: t0 + 4 * DAY, lat: -16.04, lon: -179.33, lc: 'G' }
		],
		{ now: t0 + 30 * DAY, cellDeg: 0.1 }
	)
);

describe('cells of a public journey', () => {
	it('come out in track order with their dates', () => {
		const cells = journeyCells(journey);
		expect(cells.map((c) => [c.lon, c.lat, c.firstDate])).toEqual([
			[179.55, -16.55, '2025-03-01'],
			[179.95, -16.55, '2025-03-02'],
			[-179.85, -16.45, '2025-03-03'],
			[-179.65, -16.35, '2025-03-03'],
			[-179.35, -16.05, '2025-03-05']
		]);
		expect(journeyDates(cells)).toEqual(['2025-03-01', '2025-03-02', '2025-03-03', '2025-03-05']);
	});

	it('are counted up to a date for the replay slider', () => {
		const cells = journeyCells(journey);
		expect(cellsReachedBy(cells, '2025-02-28')).toBe(0);
		expect(cellsReachedBy(cells, '2025-03-01')).toBe(1);
		expect(cellsReachedBy(cells, '2025-03-03')).toBe(4);
		expect(cellsReachedBy(cells, '2025-03-04')).toBe(4);
		expect(cellsReachedBy(cells, '2099-01-01')).toBe(5);
	});

	it('make one continuous path across 180°, centred within ±180°', () => {
		const path = continuousPath(journeyCells(journey));
		for (let i = 1; i < path.length; i++) {
			expect(Math.abs(path[i][0] - path[i - 1][0])).toBeLessThan(1);
		}
		const bounds = boundsOf(path)!;
		expect(bounds[1][0] - bounds[0][0]).toBeCloseTo(1.1, 9);
		expect((bounds[0][0] + bounds[1][0]) / 2).toBeGreaterThanOrEqual(-180);
		expect((bounds[0][0] + bounds[1][0]) / 2).toBeLessThanOrEqual(180);
	});
});

describe('longitudes', () => {
	it('unwrap so no step is longer than 180°', () => {
		expect(
			unwrapLongitudes([
				[170, 0],
				[-170, 0],
				[-150, 0],
				[170, 1]
			])
		).toEqual([
			[170, 0],
			[190, 0],
			[210, 0],
			[170, 1]
		]);
		expect(unwrapLongitudes([])).toEqual([]);
	});

	it('recentre a path by whole turns only', () => {
		expect(
			recentre([
				[190, 0],
				[200, 1]
			])
		).toEqual([
			[-170, 0],
			[-160, 1]
		]);
		expect(recentre([[10, 0]])).toEqual([[10, 0]]);
		expect(boundsOf([])).toBeNull();
	});
});

describe('shapes for the staff map', () => {
	// Checked against geographiclib (Karney 2013) on the WGS84 ellipsoid: the spherical formula is
	// within 0.5 % of the geodesic distance at these radii.
	it.each([
		[250, 26.6, -80.1],
		[1500, -16.5, 179.95],
		[5000, 60, 10]
	])('a %s m error circle at %s°, %s° has that radius', (radius, lat, lon) => {
		const ring = circleRing(lon, lat, radius, 36);
		expect(ring).toHaveLength(37);
		expect(ring[0]).toEqual(ring[36]);
		for (const [pLon, pLat] of ring) {
			const d = geodesicDistance({ lat, lon }, { lat: pLat, lon: pLon });
			expect(Math.abs(d - radius) / radius).toBeLessThan(0.005);
		}
	});

	it('draws a cell as the square around its centre', () => {
		expect(cellSquare(-80.125, 26.625, 0.25)).toEqual([
			[-80.25, 26.5],
			[-80, 26.5],
			[-80, 26.75],
			[-80.25, 26.75],
			[-80.25, 26.5]
		]);
	});
});
