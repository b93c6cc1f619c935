import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { MAP_COLOURS } from '$lib/map/style';
import type { JourneyGeoJSON } from '$lib/map/types';
import { publicProjection, toGeoJSON, type CellDeg } from '../tracking/projection';
import type { Fix } from '../tracking/types';
import { fitView, MIN_SPAN_DEG, PADDING_PX, renderJourneyPng } from './static-map';

const DAY = 86_400_000;
const START = Date.UTC(2025, 5, 1);

/** Invented fixes along a straight line, one every 12 hours, all older than the public delay. */
function journeyAlong(
	from: [lon: number, lat: number],
	to: [lon: number, lat: number],
	count: number,
	cellDeg: CellDeg = 0.25
): JourneyGeoJSON {
	const fixes: Fix[] = Array.from({ length: count }, (_, i) => {
		const t = count === 1 ? 0 : i / (count - 1);
		let lon = from[0] + (to[0] - from[0]) * t;
		if (lon > 180) lon -= 360;
		if (lon < -180) lon += 360;
		return {
			id: `fix-${i}`,
			time: START + i * DAY * 0.5,
			lat: from[1] + (to[1] - from[1]) * t,
			lon,
			lc: '2'
		};
	});
	return toGeoJSON(publicProjection(fixes, { now: START + 60 * DAY, cellDeg }));
}

async function pixels(png: Buffer) {
	const { data, info } = await sharp(png).removeAlpha().raw().toBuffer({ resolveWithObject: true });
	return {
		info,
		at(x: number, y: number): [number, number, number] {
			const i = (Math.round(y) * info.width + Math.round(x)) * 3;
			return [data[i], data[i + 1], data[i + 2]];
		}
	};
}

function rgb(hex: string): [number, number, number] {
	const n = Number.parseInt(hex.slice(1), 16);
	return [(n >> 16) & 255, (n >> 8) & 255, n & 255];
}

function expectColour(actual: [number, number, number], hex: string) {
	const expected = rgb(hex);
	for (let i = 0; i < 3; i++) expect(Math.abs(actual[i] - expected[i])).toBeLessThanOrEqual(2);
}

function cellCentres(journey: JourneyGeoJSON): [number, number][] {
	return journey.features.flatMap((f) =>
		f.geometry.type === 'Point' ? [f.geometry.coordinates] : []
	);
}

// East of Florida towards Grand Bahama: invented, but over a coast everyone knows.
const bahamas = journeyAlong([-79.8, 27.2], [-77.6, 26.1], 21);

describe('the view fitted to a journey', () => {
	it('keeps every cell inside the picture, clear of the padding', () => {
		const view = fitView(bahamas, 600, 340);
		for (const [lon, lat] of cellCentres(bahamas)) {
			const [x, y] = view.project(lon, lat);
			expect(x).toBeGreaterThanOrEqual(PADDING_PX);
			expect(x).toBeLessThanOrEqual(600 - PADDING_PX);
			expect(y).toBeGreaterThanOrEqual(PADDING_PX);
			expect(y).toBeLessThanOrEqual(340 - PADDING_PX);
		}
	});

	// Snyder 1987, USGS PP 1395, eqs. 12-1/12-2: x = R(λ − λ0)cos φ1, y = Rφ, so one degree of
	// longitude is cos φ1 times one degree of latitude on the picture.
	it('is equirectangular with the standard parallel at the journey’s middle latitude', () => {
		const view = fitView(bahamas, 600, 340);
		const [x0, y0] = view.project(-79, 26);
		const [x1] = view.project(-78, 26);
		const [, y1] = view.project(-79, 27);
		expect(view.standardParallel).toBeCloseTo((27.125 + 26.125) / 2, 6);
		expect((x1 - x0) / (y0 - y1)).toBeCloseTo(Math.cos((26.625 * Math.PI) / 180), 9);
		expect(y0 - y1).toBeCloseTo(view.pixelsPerDegree, 9);
	});

	it(`shows at least ${MIN_SPAN_DEG}° each way for a journey of one cell`, () => {
		const one = journeyAlong([-80.1, 26.6], [-80.1, 26.6], 3);
		expect(cellCentres(one)).toHaveLength(1);
		const view = fitView(one, 600, 340);
		expect(view.north - view.south).toBeGreaterThanOrEqual(MIN_SPAN_DEG);
		expect((view.east - view.west) * Math.cos((26.6 * Math.PI) / 180)).toBeGreaterThanOrEqual(
			MIN_SPAN_DEG
		);
		const [x, y] = view.project(-80.125, 26.625);
		expect(x).toBeCloseTo(300, 6);
		expect(y).toBeCloseTo(170, 6);
	});

	it('fits a journey across 180° as one piece, not as the whole world', () => {
		const pacific = journeyAlong([178.6, -17.2], [181.8, -16.0], 21);
		const lons = cellCentres(pacific).map(([lon]) => lon);
		expect(Math.min(...lons)).toBeLessThan(-170);
		expect(Math.max(...lons)).toBeGreaterThan(170);
		const view = fitView(pacific, 600, 340);
		expect(view.east - view.west).toBeLessThan(30);
		const [xWest] = view.project(178.625, -17.125);
		const [xEast] = view.project(-178.375, -16.125);
		expect(xEast).toBeGreaterThan(xWest);
		expect(xEast - xWest).toBeLessThan(600);
	});

	it('refuses a journey with no public cell, and sizes out of range', () => {
		const empty = toGeoJSON(publicProjection([], { now: START }));
		expect(() => fitView(empty, 600, 340)).toThrow(RangeError);
		expect(() => fitView(empty, 600, 340)).toThrow(/at least one public cell/);
		expect(() => fitView(bahamas, 0, 340)).toThrow(RangeError);
		expect(() => fitView(bahamas, 600.5, 340)).toThrow(/whole number/);
		expect(() => fitView(bahamas, 600, 10_000)).toThrow(RangeError);
	});
});

describe('the journey as a PNG', () => {
	it('has the requested size, 600 × 340 by default', async () => {
		expect(await sharp(await renderJourneyPng(bahamas)).metadata()).toMatchObject({
			format: 'png',
			width: 600,
			height: 340
		});
		expect(
			await sharp(await renderJourneyPng(bahamas, { width: 1200, height: 680 })).metadata()
		).toMatchObject({ width: 1200, height: 680 });
	});

	it('draws cells, sea and land where they are', async () => {
		const png = await renderJourneyPng(bahamas);
		const image = await pixels(png);
		const view = fitView(bahamas, 600, 340);
		const centres = cellCentres(bahamas);
		expect(centres.length).toBeGreaterThan(5);

		// A cell in the middle of the journey (the ends carry the start and latest markers).
		const middle = centres[Math.floor(centres.length / 2)];
		expectColour(image.at(...view.project(...middle)), MAP_COLOURS.cell);

		const latest = centres[centres.length - 1];
		expectColour(image.at(...view.project(...latest)), MAP_COLOURS.latest);
		expectColour(image.at(...view.project(...centres[0])), MAP_COLOURS.start);

		// Open Atlantic north-east of the Bahamas, far from the track.
		const [sx, sy] = view.project(-74.5, 28.5);
		expect(sx).toBeGreaterThan(0);
		expect(sx).toBeLessThan(600);
		expectColour(image.at(sx, sy), MAP_COLOURS.sea);

		// Inland central Florida, well away from any coast.
		const [lx, ly] = view.project(-81.7, 28.8);
		expect(lx).toBeGreaterThan(0);
		expect(ly).toBeGreaterThan(0);
		expectColour(image.at(lx, ly), MAP_COLOURS.land);
	});

	it('draws a journey across 180° with its cells on both sides and land of Fiji in view', async () => {
		const pacific = journeyAlong([178.6, -17.2], [181.8, -16.0], 21);
		const image = await pixels(await renderJourneyPng(pacific));
		const view = fitView(pacific, 600, 340);
		const centres = cellCentres(pacific);
		const west = centres.find(([lon]) => lon > 179 && lon < 179.6);
		const east = centres.find(([lon]) => lon < -179 && lon > -179.6);
		expect(west).toBeDefined();
		expect(east).toBeDefined();
		expectColour(image.at(...view.project(...west!)), MAP_COLOURS.cell);
		expectColour(image.at(...view.project(...east!)), MAP_COLOURS.cell);
		// Viti Levu, the largest island of Fiji, at about 178°E 17.8°S.
		expectColour(image.at(...view.project(178.0, -17.8)), MAP_COLOURS.land);
	});
});
