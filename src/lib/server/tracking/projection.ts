/**
 * The public projection of a cleaned track: the only track the public ever sees (PRODUCT.md,
 * "Location safety"). Fixes newer than the delay are withheld, the rest are snapped to the centre
 * of a fixed latitude/longitude grid cell, consecutive fixes in one cell are merged, and only
 * dates (never times) survive.
 *
 * Fixed grid rather than random offsets, cell sizes of 0.1° and coarser: Chapman 2020, "Current
 * Best Practices for Generalizing Sensitive Species Occurrence Data", GBIF,
 * doi:10.15468/doc-5jp4-5g10, Table 6. A fixed grid cannot be averaged away by publishing the same
 * fix twice, which random jitter can.
 */
import { geodesicDistance } from './geodesy';
import type { Fix } from './types';

export const CELL_SIZES = [0.1, 0.25, 0.5, 1] as const;
export type CellDeg = (typeof CELL_SIZES)[number];
export const DEFAULT_CELL_DEG: CellDeg = 0.1;
export const MIN_DELAY_DAYS = 7;

const DAY_MS = 86_400_000;
export const METRES_PER_MILE = 1609.344; // international mile, exact by definition (1959)

export interface PublicPoint {
	lat: number;
	lon: number;
	/** 'YYYY-MM-DD' (UTC) of the first fix merged into this cell visit */
	firstDate: string;
	/** 'YYYY-MM-DD' (UTC) of the last fix merged into this cell visit */
	lastDate: string;
}

export interface PublicJourney {
	cellDeg: CellDeg;
	delayDays: number;
	/** UTC date of the cutoff instant (now − delay); nothing after it is public. */
	cutoffDate: string;
	/** UTC date of the newest public fix, or null when nothing is public yet. */
	lastPublicDate: string | null;
	/**
	 * Geodesic length (WGS84) of the cleaned track up to the cutoff, in metres. Exact, for
	 * milestone steps; show readers `distanceRounded` instead.
	 */
	distanceMetres: number;
	points: PublicPoint[];
}

export interface ProjectionOptions {
	/** ms since epoch (UTC) */
	now: number;
	/** default 7; staff may raise it, never lower it */
	delayDays?: number;
	cellDeg?: CellDeg;
	/** ms since epoch; fixes before the release (e.g. tests in the pool) are ignored */
	releasedAt?: number;
	/**
	 * Leg lengths already measured: `legMetres[i]` = `geodesicDistance(cleaned[i], cleaned[i + 1])`,
	 * as `cleanTrack` returns them. The track must then be in time order (as `cleanTrack` returns
	 * it). The distance is the same to the last bit as without them; only the work is saved.
	 */
	legMetres?: ArrayLike<number>;
}

export function isCellDeg(value: unknown): value is CellDeg {
	return (CELL_SIZES as readonly unknown[]).includes(value);
}

/** Cells per degree: 10, 4, 2 or 1. All grid arithmetic is done on integers from here. */
function cellsPerDegree(cellDeg: CellDeg): number {
	return Math.round(1 / cellDeg);
}

/** Decimals that represent every cell centre exactly: 0.05-steps need 2, 0.125-steps need 3. */
function centreDecimals(cellDeg: CellDeg): number {
	return cellDeg === 0.25 ? 3 : 2;
}

// Within this fraction of a cell of an edge, a coordinate counts as on the edge. Decimal inputs
// such as 17.9 are not exact in binary (17.899999…), and `(17.9 + 90) * 10` may land either side
// of 1079; snapping makes the documented rule "an edge belongs to the cell above/east of it" hold
// for the decimal value people wrote. 1e-9 of a cell is below 0.02 mm.
const EDGE_EPSILON = 1e-9;

function index(offsetDegrees: number, perDegree: number, count: number): number {
	const x = offsetDegrees * perDegree;
	const nearest = Math.round(x);
	const i = Math.abs(x - nearest) < EDGE_EPSILON ? nearest : Math.floor(x);
	// lat exactly 90 / lon exactly 180 belong to the last cell
	return Math.min(Math.max(i, 0), count - 1);
}

/** Integer cell indices on the grid anchored at (−90°, −180°). */
export function cellOf(lat: number, lon: number, cellDeg: CellDeg): { row: number; col: number } {
	if (!Number.isFinite(lat) || lat < -90 || lat > 90) {
		throw new RangeError(`latitude out of range: ${lat}`);
	}
	if (!Number.isFinite(lon) || lon < -180 || lon > 180) {
		throw new RangeError(`longitude out of range: ${lon}`);
	}
	const k = cellsPerDegree(cellDeg);
	return { row: index(lat + 90, k, 180 * k), col: index(lon + 180, k, 360 * k) };
}

/**
 * Centre of cell (row, col): computed from integers, (2·row + 1 − 180k) / 2k. In units of the
 * last decimal the centre is the integer (2·row + 1 − 180k) · 10^d / 2k (10^d / 2k is 5, 125, 25
 * or 50), so one division gives the double nearest the decimal value, the same number as
 * `Number(x.toFixed(d))` without making a string (projection.test.ts checks every cell).
 */
export function cellCentre(
	row: number,
	col: number,
	cellDeg: CellDeg
): { lat: number; lon: number } {
	const k = cellsPerDegree(cellDeg);
	const scale = 10 ** centreDecimals(cellDeg);
	const step = scale / (2 * k);
	return {
		lat: ((2 * row + 1 - 180 * k) * step) / scale,
		lon: ((2 * col + 1 - 360 * k) * step) / scale
	};
}

/** The public stand-in for a position: the centre of its grid cell. */
export function snapToCell(
	lat: number,
	lon: number,
	cellDeg: CellDeg
): { lat: number; lon: number } {
	const { row, col } = cellOf(lat, lon, cellDeg);
	return cellCentre(row, col, cellDeg);
}

/** 'YYYY-MM-DD' in UTC: the only time information the public gets. */
export function utcDate(ms: number): string {
	return new Date(ms).toISOString().slice(0, 10);
}

function resolveDelay(delayDays: number | undefined): number {
	const delay = delayDays ?? MIN_DELAY_DAYS;
	if (!Number.isFinite(delay) || delay < MIN_DELAY_DAYS) {
		throw new RangeError(
			`delayDays must be at least ${MIN_DELAY_DAYS} (staff may only raise it), got ${delay}`
		);
	}
	return delay;
}

export function publicProjection(
	cleaned: readonly Fix[],
	options: ProjectionOptions
): PublicJourney {
	const { now, releasedAt } = options;
	if (!Number.isFinite(now)) throw new RangeError('now must be a finite timestamp');
	if (releasedAt !== undefined && !Number.isFinite(releasedAt)) {
		throw new RangeError('releasedAt must be a finite timestamp');
	}
	const delayDays = resolveDelay(options.delayDays);
	const cellDeg = options.cellDeg ?? DEFAULT_CELL_DEG;
	if (!isCellDeg(cellDeg)) {
		throw new RangeError(`cellDeg must be one of ${CELL_SIZES.join(', ')}, got ${cellDeg}`);
	}
	const cutoff = now - delayDays * DAY_MS;
	const { legMetres } = options;
	const inOrder = isTimeOrdered(cleaned);
	if (legMetres !== undefined) {
		if (!inOrder) {
			throw new RangeError(
				'legMetres needs the cleaned track in time order, as cleanTrack gives it'
			);
		}
		if (legMetres.length !== Math.max(cleaned.length - 1, 0)) {
			throw new RangeError(
				`legMetres must hold one length per leg (${Math.max(cleaned.length - 1, 0)}), got ${legMetres.length}`
			);
		}
	}
	const isPublic = (f: Fix) =>
		f.time <= cutoff && (releasedAt === undefined || f.time >= releasedAt);
	// A track in time order (cleanTrack's output) is read in place: sorting would not move it.
	const track = inOrder ? cleaned : cleaned.filter(isPublic).sort((a, b) => a.time - b.time);

	let distanceMetres = 0;
	const points: PublicPoint[] = [];
	let lastRow = -1;
	let lastCol = -1;
	let last = -1;
	let lastDay = Number.NaN;
	let date = '';
	for (let i = 0; i < track.length; i++) {
		const fix = track[i];
		if (!isPublic(fix)) continue;
		// In time order the public fixes are one run, so the previous public fix is track[i − 1].
		if (last >= 0 && legMetres !== undefined) {
			const leg = legMetres[i - 1];
			if (!(leg >= 0 && leg < Infinity)) {
				throw new RangeError(`legMetres[${i - 1}] is not a length in metres: ${leg}`);
			}
			distanceMetres += leg;
		} else if (last >= 0) {
			distanceMetres += geodesicDistance(track[last], fix);
		}
		last = i;
		const { row, col } = cellOf(fix.lat, fix.lon, cellDeg);
		// The date string depends only on the UTC day: make it once per day, not once per fix.
		const day = Math.floor(fix.time / DAY_MS);
		if (day !== lastDay) {
			lastDay = day;
			date = utcDate(fix.time);
		}
		if (points.length > 0 && row === lastRow && col === lastCol) {
			points[points.length - 1].lastDate = date;
		} else {
			const centre = cellCentre(row, col, cellDeg);
			points.push({ lat: centre.lat, lon: centre.lon, firstDate: date, lastDate: date });
			lastRow = row;
			lastCol = col;
		}
	}

	return {
		cellDeg,
		delayDays,
		cutoffDate: utcDate(cutoff),
		lastPublicDate: last >= 0 ? utcDate(track[last].time) : null,
		distanceMetres,
		points
	};
}

/** True when times never decrease; a NaN time counts as out of order. */
function isTimeOrdered(fixes: readonly Fix[]): boolean {
	for (let i = 1; i < fixes.length; i++) {
		if (!(fixes[i].time >= fixes[i - 1].time)) return false;
	}
	return true;
}

export type DistanceUnit = 'km' | 'mi';

/** Distance for readers: to the nearest 10 km or 5 mi, so it cannot pin down a position. */
export function distanceRounded(
	journey: Pick<PublicJourney, 'distanceMetres'> | number,
	unit: DistanceUnit
): number {
	const metres = typeof journey === 'number' ? journey : journey.distanceMetres;
	if (unit === 'km') return Math.round(metres / 10_000) * 10;
	return Math.round(metres / METRES_PER_MILE / 5) * 5;
}

// ---------------------------------------------------------------------------------------------
// GeoJSON (RFC 7946)

type Position = [number, number];

export interface JourneyLineFeature {
	type: 'Feature';
	geometry:
		| { type: 'LineString'; coordinates: Position[] }
		| { type: 'MultiLineString'; coordinates: Position[][] };
	properties: { kind: 'track' };
}

export interface JourneyPointFeature {
	type: 'Feature';
	geometry: { type: 'Point'; coordinates: Position };
	properties: { kind: 'cell'; firstDate: string; lastDate: string };
}

export interface JourneyGeoJSON {
	type: 'FeatureCollection';
	/** Foreign member (RFC 7946 §6.1): summary of the journey. */
	properties: {
		distanceKm: number;
		distanceMi: number;
		cellDeg: CellDeg;
		delayDays: number;
		cutoffDate: string;
		lastPublicDate: string | null;
	};
	features: Array<JourneyLineFeature | JourneyPointFeature>;
}

/**
 * Splits the line of cell centres where it crosses the antimeridian, as RFC 7946 §3.1.9 asks
 * ("cutting it in two such that neither part's representation crosses the antimeridian"). A step
 * whose longitude changes by more than 180° is taken to go the short way, across 180°. The cut
 * vertices sit at lon ±180 with a latitude interpolated between the two centres and then snapped
 * to the nearest centre latitude, so every latitude in the output stays on the public grid (the
 * kink is at most half a cell).
 */
export function splitAtAntimeridian(line: readonly Position[], cellDeg: CellDeg): Position[][] {
	if (line.length === 0) return [];
	const parts: Position[][] = [[line[0]]];
	for (let i = 1; i < line.length; i++) {
		const [lon0, lat0] = line[i - 1];
		const [lon1, lat1] = line[i];
		const delta = lon1 - lon0;
		if (Math.abs(delta) > 180) {
			const eastward = delta < 0; // e.g. 179.95 → −179.95
			const edge = eastward ? 180 : -180;
			const unwrapped = eastward ? lon1 + 360 : lon1 - 360;
			const t = (edge - lon0) / (unwrapped - lon0);
			const lat = snapToCell(lat0 + t * (lat1 - lat0), 0, cellDeg).lat;
			parts[parts.length - 1].push([edge, lat]);
			parts.push([[-edge, lat]]);
		}
		parts[parts.length - 1].push(line[i]);
	}
	return parts;
}

export function toGeoJSON(journey: PublicJourney): JourneyGeoJSON {
	const features: Array<JourneyLineFeature | JourneyPointFeature> = [];
	const line: Position[] = journey.points.map((p) => [p.lon, p.lat]);
	if (line.length >= 2) {
		const parts = splitAtAntimeridian(line, journey.cellDeg);
		features.push({
			type: 'Feature',
			geometry:
				parts.length === 1
					? { type: 'LineString', coordinates: parts[0] }
					: { type: 'MultiLineString', coordinates: parts },
			properties: { kind: 'track' }
		});
	}
	for (const p of journey.points) {
		features.push({
			type: 'Feature',
			geometry: { type: 'Point', coordinates: [p.lon, p.lat] },
			properties: { kind: 'cell', firstDate: p.firstDate, lastDate: p.lastDate }
		});
	}
	return {
		type: 'FeatureCollection',
		properties: {
			distanceKm: distanceRounded(journey, 'km'),
			distanceMi: distanceRounded(journey, 'mi'),
			cellDeg: journey.cellDeg,
			delayDays: journey.delayDays,
			cutoffDate: journey.cutoffDate,
			lastPublicDate: journey.lastPublicDate
		},
		features
	};
}
