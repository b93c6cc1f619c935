/**
 * Geodesics on the WGS84 ellipsoid (a = 6378137 m, f = 1/298.257223563), delegated to
 * geographiclib-geodesic (C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87, 2013),
 * which is accurate to about 15 nm everywhere, including nearly antipodal points where
 * Vincenty's method fails to converge.
 */
import * as geographiclib from 'geographiclib-geodesic';

// The package is UMD/CommonJS: Node's ESM loader exposes it only as `default`, Vite's
// interop exposes named exports too. Accept either shape.
const lib: typeof geographiclib =
	(geographiclib as unknown as { default?: typeof geographiclib }).default ?? geographiclib;
const { Geodesic } = lib;
const WGS84 = Geodesic.WGS84;
const DISTANCE_ONLY = Geodesic.DISTANCE;
const DIRECT_MASK = Geodesic.LATITUDE | Geodesic.LONGITUDE | Geodesic.AZIMUTH;

export interface LatLon {
	lat: number;
	lon: number;
}

export interface InverseResult {
	/** metres */
	distance: number;
	/** forward azimuth at the start, degrees clockwise from north */
	azimuth1: number;
	/** forward azimuth at the end, degrees clockwise from north */
	azimuth2: number;
}

export interface DirectResult extends LatLon {
	/** forward azimuth at the destination, degrees */
	azimuth: number;
}

/** Geodesic (shortest ellipsoidal) distance in metres between two points. */
export function geodesicDistance(a: LatLon, b: LatLon): number {
	// Asking for the distance alone skips the azimuth and reduced-length work.
	return WGS84.Inverse(a.lat, a.lon, b.lat, b.lon, DISTANCE_ONLY).s12 as number;
}

/** Distance and both azimuths of the geodesic from a to b. */
export function inverse(a: LatLon, b: LatLon): InverseResult {
	const r = WGS84.Inverse(a.lat, a.lon, b.lat, b.lon);
	return { distance: r.s12 as number, azimuth1: r.azi1 as number, azimuth2: r.azi2 as number };
}

/** Sum of the geodesic distances between consecutive points, in metres. */
export function trackLength(points: readonly LatLon[]): number {
	let total = 0;
	for (let i = 1; i < points.length; i++) total += geodesicDistance(points[i - 1], points[i]);
	return total;
}

/**
 * The point reached by travelling `metres` along the geodesic leaving `from` at `azimuthDeg`
 * (degrees clockwise from north). Longitude is returned in [−180°, 180°].
 */
export function direct(from: LatLon, azimuthDeg: number, metres: number): DirectResult {
	const r = WGS84.Direct(from.lat, from.lon, azimuthDeg, metres, DIRECT_MASK);
	return { lat: r.lat2 as number, lon: r.lon2 as number, azimuth: r.azi2 as number };
}
