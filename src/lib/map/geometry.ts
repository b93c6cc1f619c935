// Plain coordinate helpers for the maps, used in the browser and on the server. The journey's
// cells and path are in journey-cells.ts, so that a public page can take them without the rest.
import type { Position } from './types';

export {
	cellsReachedBy,
	continuousPath,
	journeyCells,
	journeyDates,
	recentre,
	unwrapLongitudes,
	type JourneyCell
} from './journey-cells';

export type LonLatBounds = [[west: number, south: number], [east: number, north: number]];

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
