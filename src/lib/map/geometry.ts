// Plain coordinate helpers for the maps, used in the browser and on the server.
import type { JourneyGeoJSON, Position } from './types';

/** One public cell visit, in track order. */
export interface JourneyCell {
	lon: number;
	lat: number;
	firstDate: string;
	lastDate: string;
}

export type LonLatBounds = [[west: number, south: number], [east: number, north: number]];

/** The cell visits of a public journey, in the order the projection wrote them (time order). */
export function journeyCells(journey: JourneyGeoJSON): JourneyCell[] {
	const cells: JourneyCell[] = [];
	for (const feature of journey.features) {
		if (feature.properties.kind !== 'cell' || feature.geometry.type !== 'Point') continue;
		const [lon, lat] = feature.geometry.coordinates;
		cells.push({
			lon,
			lat,
			firstDate: feature.properties.firstDate,
			lastDate: feature.properties.lastDate
		});
	}
	return cells;
}

/**
 * Each longitude moved by whole turns to within 180° of the one before it, so that a path across
 * the antimeridian runs on (179.9 → 180.1) instead of jumping back across the map (→ −179.9).
 */
export function unwrapLongitudes(positions: readonly Position[]): Position[] {
	const out: Position[] = [];
	for (const [lon, lat] of positions) {
		const previous = out.at(-1);
		out.push([previous ? lon - 360 * Math.round((lon - previous[0]) / 360) : lon, lat]);
	}
	return out;
}

/**
 * Shifts the whole path by whole turns so that the middle of its longitude range lies within
 * [−180°, 180°], e.g. a path unwrapped to 190°…200° becomes −170°…−160°.
 */
export function recentre(positions: readonly Position[]): Position[] {
	if (positions.length === 0) return [];
	const lons = positions.map((p) => p[0]);
	const middle = (Math.min(...lons) + Math.max(...lons)) / 2;
	const shift = -360 * Math.round(middle / 360);
	return shift === 0 ? [...positions] : positions.map(([lon, lat]) => [lon + shift, lat]);
}

/** The cells' path with continuous longitudes, ready for a line and for fitting the view. */
export function continuousPath(cells: readonly JourneyCell[]): Position[] {
	return recentre(unwrapLongitudes(cells.map((c) => [c.lon, c.lat])));
}

/** South-west and north-east corners; longitudes as given (unwrap first). Null when empty. */
export function boundsOf(positions: readonly Position[]): LonLatBounds | null {
	if (positions.length === 0) return null;
	let west = Infinity;
	let south = Infinity;
	let east = -Infinity;
	let north = -Infinity;
	for (const [lon, lat] of positions) {
		west = Math.min(west, lon);
		east = Math.max(east, lon);
		south = Math.min(south, lat);
		north = Math.max(north, lat);
	}
	return [
		[west, south],
		[east, north]
	];
}

/** The distinct first dates of the cells, oldest first: the stops of the replay slider. */
export function journeyDates(cells: readonly JourneyCell[]): string[] {
	return [...new Set(cells.map((c) => c.firstDate))].sort();
}

/** How many cells (from the start) had been reached on `date` ('YYYY-MM-DD'). */
export function cellsReachedBy(cells: readonly JourneyCell[], date: string): number {
	let count = 0;
	for (const cell of cells) {
		if (cell.firstDate > date) break;
		count++;
	}
	return count;
}

const EARTH_RADIUS_M = 6_371_008.8; // IUGG mean radius R1 (Moritz 1980, Geodetic Reference System 1980)

/**
 * A circle of `radiusM` metres around (lon, lat) as a closed ring of `steps` + 1 positions, from
 * the spherical "destination given radial and distance" formula (E. Williams, Aviation Formulary
 * V1.46). For error circles of a few kilometres the sphere is within a fraction of a percent of
 * the ellipsoid, plenty for a picture. Longitudes stay continuous around the centre.
 */
export function circleRing(lon: number, lat: number, radiusM: number, steps = 48): Position[] {
	const d = radiusM / EARTH_RADIUS_M;
	const phi1 = (lat * Math.PI) / 180;
	const lambda1 = (lon * Math.PI) / 180;
	const ring: Position[] = [];
	for (let i = 0; i <= steps; i++) {
		const theta = (2 * Math.PI * (i % steps)) / steps;
		const phi2 = Math.asin(
			Math.sin(phi1) * Math.cos(d) + Math.cos(phi1) * Math.sin(d) * Math.cos(theta)
		);
		const lambda2 =
			lambda1 +
			Math.atan2(
				Math.sin(theta) * Math.sin(d) * Math.cos(phi1),
				Math.cos(d) - Math.sin(phi1) * Math.sin(phi2)
			);
		ring.push([(lambda2 * 180) / Math.PI, (phi2 * 180) / Math.PI]);
	}
	return ring;
}

/** The square of a public grid cell around its centre, as a closed ring (counter-clockwise). */
export function cellSquare(lon: number, lat: number, cellDeg: number): Position[] {
	const h = cellDeg / 2;
	return [
		[lon - h, lat - h],
		[lon + h, lat - h],
		[lon + h, lat + h],
		[lon - h, lat + h],
		[lon - h, lat - h]
	];
}
