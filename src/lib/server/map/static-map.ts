import sharp from 'sharp';
import { continuousPath, journeyCells, unwrapLongitudes } from '$lib/map/geometry';
import { MAP_COLOURS } from '$lib/map/style';
import type { JourneyGeoJSON, Position } from '$lib/map/types';
import { landPolygons } from './basemap';

// A still picture of a public journey for e-mails and share images: land, the line between the
// public cells, the cells, and markers for the first (release) and the latest cell. Drawn as SVG
// and rasterised by sharp; it has no text, so no font is involved. Fed only from the public
// projection, never from raw fixes.

export const STATIC_MAP_WIDTH = 600; // the usual width of an e-mail body
export const STATIC_MAP_HEIGHT = 340;
/**
 * The view shows at least 6° (about 670 km) in each direction, so that a journey of a few cells
 * still shows the coast it started from rather than a blank square of sea. 6° is roughly the
 * distance a turtle covers in one to two weeks; longer journeys are fitted as they are.
 */
export const MIN_SPAN_DEG = 6;
/** Kept clear around the journey so that markers are not cut by the edge. */
export const PADDING_PX = 28;
/** The standard parallel is the journey's middle latitude, kept within ±80° so cos φ1 > 0.17. */
const MAX_STANDARD_PARALLEL = 80;
const MIN_SIZE = 100;
const MAX_SIZE = 2400;

export interface MapView {
	width: number;
	height: number;
	/** Centre of the picture; the longitude may lie outside ±180 for a journey across 180°. */
	centreLon: number;
	centreLat: number;
	/** Standard parallel φ1 of the equirectangular projection. */
	standardParallel: number;
	/** Pixels per degree of latitude (and per degree of longitude at φ1). */
	pixelsPerDegree: number;
	/** Extent of the picture: west/east continuous around centreLon. */
	west: number;
	east: number;
	south: number;
	north: number;
	/** Pixel position of (lon, lat), using the copy of `lon` nearest the centre. */
	project(lon: number, lat: number): [x: number, y: number];
	/** Pixel position of (lon, lat) taken as given (no wrapping), for whole shapes. */
	projectExact(lon: number, lat: number): [x: number, y: number];
}

function clamp(value: number, min: number, max: number): number {
	return Math.min(Math.max(value, min), max);
}

function checkSize(name: string, value: number): void {
	if (!Number.isInteger(value) || value < MIN_SIZE || value > MAX_SIZE) {
		throw new RangeError(
			`${name} must be a whole number of pixels from ${MIN_SIZE} to ${MAX_SIZE}, got ${value}`
		);
	}
}

/**
 * The view for a journey: an equirectangular projection with its standard parallel at the
 * journey's middle latitude (Snyder 1987, "Map Projections — A Working Manual", USGS Professional
 * Paper 1395, §12, eqs. 12-1 and 12-2: x = R(λ − λ0) cos φ1, y = Rφ), scaled so that the journey's
 * cells, with PADDING_PX to spare, fill the picture, and never showing less than MIN_SPAN_DEG.
 * Longitudes are unwrapped along the journey, so one crossing 180° is fitted as one piece.
 *
 * @throws RangeError when the journey has no public cell yet (there is nothing to centre on), or
 * when the size is not a whole number of pixels from 100 to 2400.
 */
export function fitView(journey: JourneyGeoJSON, width: number, height: number): MapView {
	checkSize('width', width);
	checkSize('height', height);
	const path = continuousPath(journeyCells(journey));
	if (path.length === 0) {
		throw new RangeError('A journey map needs at least one public cell; this journey has none.');
	}
	let west = Infinity;
	let east = -Infinity;
	let south = Infinity;
	let north = -Infinity;
	for (const [lon, lat] of path) {
		west = Math.min(west, lon);
		east = Math.max(east, lon);
		south = Math.min(south, lat);
		north = Math.max(north, lat);
	}
	const standardParallel = clamp(
		(south + north) / 2,
		-MAX_STANDARD_PARALLEL,
		MAX_STANDARD_PARALLEL
	);
	const cosPhi = Math.cos((standardParallel * Math.PI) / 180);
	const spanX = Math.max((east - west) * cosPhi, MIN_SPAN_DEG);
	const spanY = Math.max(north - south, MIN_SPAN_DEG);
	let scale = Math.min((width - 2 * PADDING_PX) / spanX, (height - 2 * PADDING_PX) / spanY);
	// Never wider than the world, so that each place appears once.
	scale = Math.max(scale, width / (360 * cosPhi));

	const centreLon = (west + east) / 2;
	const halfHeightDeg = height / 2 / scale;
	const centreLat =
		halfHeightDeg < 90 ? clamp((south + north) / 2, -90 + halfHeightDeg, 90 - halfHeightDeg) : 0;
	const halfWidthDeg = width / 2 / (scale * cosPhi);

	const projectExact = (lon: number, lat: number): [number, number] => [
		width / 2 + (lon - centreLon) * cosPhi * scale,
		height / 2 - (lat - centreLat) * scale
	];
	return {
		width,
		height,
		centreLon,
		centreLat,
		standardParallel,
		pixelsPerDegree: scale,
		west: centreLon - halfWidthDeg,
		east: centreLon + halfWidthDeg,
		south: centreLat - halfHeightDeg,
		north: centreLat + halfHeightDeg,
		projectExact,
		project: (lon, lat) => projectExact(lon - 360 * Math.round((lon - centreLon) / 360), lat)
	};
}

type Point = [number, number];

/** Sutherland–Hodgman clipping of a closed ring to an axis-aligned rectangle. */
function clipRing(ring: readonly Point[], x0: number, y0: number, x1: number, y1: number): Point[] {
	const edges: Array<[(p: Point) => boolean, (a: Point, b: Point) => Point]> = [
		[(p) => p[0] >= x0, (a, b) => [x0, a[1] + ((b[1] - a[1]) * (x0 - a[0])) / (b[0] - a[0])]],
		[(p) => p[0] <= x1, (a, b) => [x1, a[1] + ((b[1] - a[1]) * (x1 - a[0])) / (b[0] - a[0])]],
		[(p) => p[1] >= y0, (a, b) => [a[0] + ((b[0] - a[0]) * (y0 - a[1])) / (b[1] - a[1]), y0]],
		[(p) => p[1] <= y1, (a, b) => [a[0] + ((b[0] - a[0]) * (y1 - a[1])) / (b[1] - a[1]), y1]]
	];
	let out: Point[] = ring.slice();
	for (const [isInside, cross] of edges) {
		const input = out;
		out = [];
		for (let i = 0; i < input.length; i++) {
			const current = input[i];
			const previous = input[(i + input.length - 1) % input.length];
			if (isInside(current)) {
				if (!isInside(previous)) out.push(cross(previous, current));
				out.push(current);
			} else if (isInside(previous)) {
				out.push(cross(previous, current));
			}
		}
		if (out.length === 0) break;
	}
	return out;
}

/** Drops vertices closer than `minPx` to the last one kept: detail smaller than a pixel. */
function thin(points: readonly Point[], minPx: number): Point[] {
	const out: Point[] = [];
	for (const p of points) {
		const last = out[out.length - 1];
		if (!last || Math.abs(p[0] - last[0]) + Math.abs(p[1] - last[1]) >= minPx) out.push(p);
	}
	return out;
}

const fmt = (n: number) => (Math.round(n * 10) / 10).toString();

function pathData(points: readonly Point[], close: boolean): string {
	if (points.length === 0) return '';
	const [first, ...rest] = points;
	return `M${fmt(first[0])} ${fmt(first[1])}${rest.map((p) => `L${fmt(p[0])} ${fmt(p[1])}`).join('')}${close ? 'Z' : ''}`;
}

/** Land within the view (and a little beyond, so clipped edges fall outside the picture). */
function landPath(view: MapView): string {
	const margin = 4;
	const marginDeg = margin / view.pixelsPerDegree;
	const parts: string[] = [];
	for (const polygon of landPolygons()) {
		const [w, s, e, n] = polygon.bbox;
		if (s > view.north + marginDeg || n < view.south - marginDeg) continue;
		for (const shift of [-360, 0, 360]) {
			if (w + shift > view.east + marginDeg * 4 || e + shift < view.west - marginDeg * 4) continue;
			for (const ring of polygon.rings) {
				const projected = ring.map(([lon, lat]) => view.projectExact(lon + shift, lat));
				const clipped = clipRing(
					projected,
					-margin,
					-margin,
					view.width + margin,
					view.height + margin
				);
				const thinned = thin(clipped, 0.4);
				if (thinned.length >= 3) parts.push(pathData(thinned, true));
			}
		}
	}
	return parts.join('');
}

/** The public line, each part unwrapped and placed on the copy nearest the view's centre. */
function trackPath(journey: JourneyGeoJSON, view: MapView): string {
	const parts: Position[][] = [];
	for (const feature of journey.features) {
		if (feature.properties.kind !== 'track') continue;
		if (feature.geometry.type === 'LineString') parts.push(feature.geometry.coordinates);
		else if (feature.geometry.type === 'MultiLineString') {
			parts.push(...feature.geometry.coordinates);
		}
	}
	return parts
		.filter((part) => part.length >= 2)
		.map((part) => {
			const line = unwrapLongitudes(part);
			const shift = -360 * Math.round((line[0][0] - view.centreLon) / 360);
			return pathData(
				line.map(([lon, lat]) => view.projectExact(lon + shift, lat)),
				false
			);
		})
		.join('');
}

/** The picture as SVG (exported for previews and tests). */
export function journeyMapSvg(journey: JourneyGeoJSON, view: MapView): string {
	const { width, height } = view;
	const cells = journeyCells(journey).map((c) => view.project(c.lon, c.lat));
	// On a long journey the dots would merge into a bead string; the line carries the path.
	const dots: Point[] = [];
	for (const p of cells) {
		const last = dots[dots.length - 1];
		if (!last || Math.hypot(p[0] - last[0], p[1] - last[1]) >= 6) dots.push(p);
	}
	const track = trackPath(journey, view);
	const c = MAP_COLOURS;
	const dot = ([x, y]: Point, r: number, fill: string, strokeWidth: number) =>
		`<circle cx="${fmt(x)}" cy="${fmt(y)}" r="${r}" fill="${fill}" stroke="${c.cellOutline}" stroke-width="${strokeWidth}"/>`;
	const first = cells[0];
	const latest = cells[cells.length - 1];
	// The release is a diamond and the latest cell a large ring-edged dot: told apart by shape.
	const diamond = ([x, y]: Point, r: number) =>
		`<path d="M${fmt(x)} ${fmt(y - r)}L${fmt(x + r)} ${fmt(y)}L${fmt(x)} ${fmt(y + r)}L${fmt(x - r)} ${fmt(y)}Z" fill="${c.start}" stroke="${c.cellOutline}" stroke-width="2" stroke-linejoin="round"/>`;
	return `<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${height}" viewBox="0 0 ${width} ${height}">
<rect width="${width}" height="${height}" fill="${c.sea}"/>
<path d="${landPath(view)}" fill="${c.land}" fill-rule="evenodd" stroke="${c.coast}" stroke-width="0.8" stroke-linejoin="round"/>
${track ? `<path d="${track}" fill="none" stroke="#ffffff" stroke-opacity="0.7" stroke-width="5" stroke-linecap="round" stroke-linejoin="round"/><path d="${track}" fill="none" stroke="${c.track}" stroke-width="2.5" stroke-linecap="round" stroke-linejoin="round"/>` : ''}
${dots.map((p) => dot(p, 3.5, c.cell, 1.2)).join('')}
${cells.length > 1 ? diamond(first, 8) : ''}
${dot(latest, 7, c.latest, 2.5)}
</svg>`;
}

/**
 * The journey as a PNG of `width` × `height` pixels (default 600 × 340). For sharp images on
 * high-density screens, ask for twice the size and show it at half.
 *
 * @throws RangeError when the journey has no public cell yet (see fitView).
 */
export async function renderJourneyPng(
	journey: JourneyGeoJSON,
	options: { width?: number; height?: number } = {}
): Promise<Buffer> {
	const view = fitView(
		journey,
		options.width ?? STATIC_MAP_WIDTH,
		options.height ?? STATIC_MAP_HEIGHT
	);
	return sharp(Buffer.from(journeyMapSvg(journey, view)))
		.png({ compressionLevel: 9 })
		.toBuffer();
}
