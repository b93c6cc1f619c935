// The cells of a public journey, its path and its replay stops: what the journey's page needs
// before its map loads (re-exported by geometry.ts with the other map helpers).
import type { JourneyGeoJSON, Position } from './types';

/** One public cell visit, in track order. */
export interface JourneyCell {
	lon: number;
	lat: number;
	firstDate: string;
	lastDate: string;
}

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
