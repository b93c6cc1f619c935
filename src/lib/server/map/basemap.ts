import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { promisify } from 'node:util';
import { brotliCompress, constants as zlib, gzip } from 'node:zlib';
import type { Feature, FeatureCollection, MultiPolygon, Polygon } from 'geojson';
import { feature } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import type { Position } from '$lib/map/types';
import { strongEtag } from '../http';

// The land under every map: Natural Earth 1:50m land (public domain), as packaged in world-atlas.
// It is read from node_modules at run time rather than bundled, because the build would otherwise
// inline half a megabyte of JSON into the server chunk; world-atlas is a production dependency.

export interface LandPolygon {
	/** Exterior ring first, then holes; closed, longitudes continuous, 4 decimals. */
	rings: Position[][];
	/** [west, south, east, north] of the exterior ring; west may be below −180, east above 180. */
	bbox: [number, number, number, number];
}

const DECIMALS = 4;
/** Rings lying wholly this close to a pole are artefacts of the sphere (a point-sized hole). */
const POLE_RING_LAT = 89.9;

function round(value: number): number {
	const r = Number(value.toFixed(DECIMALS));
	return r === 0 ? 0 : r;
}

/** Twice the signed area in the lon/lat plane; positive = counter-clockwise. */
function signedArea(ring: readonly Position[]): number {
	let sum = 0;
	for (let i = 1; i < ring.length; i++) {
		sum += ring[i - 1][0] * ring[i][1] - ring[i][0] * ring[i - 1][1];
	}
	return sum;
}

/**
 * One ring with continuous longitudes (STACK.md item 7): every step of more than 180° is taken
 * across the antimeridian. A ring that goes once around a pole (Antarctica, once stitched at 180°)
 * does not close after unwrapping; it is closed through the pole along the map's edge, in steps of
 * at most 90° so that no edge is mistaken for a jump.
 */
export function unwrapRing(ring: readonly Position[]): Position[] {
	if (ring.length === 0) return [];
	const out: Position[] = [[ring[0][0], ring[0][1]]];
	for (let i = 1; i < ring.length; i++) {
		const previous = out[out.length - 1][0];
		const [lon, lat] = ring[i];
		out.push([lon - 360 * Math.round((lon - previous) / 360), lat]);
	}
	const first = out[0];
	const last = out[out.length - 1];
	const turns = Math.round((last[0] - first[0]) / 360);
	if (turns !== 0) {
		const meanLat = out.reduce((sum, p) => sum + p[1], 0) / out.length;
		const pole = meanLat < 0 ? -90 : 90;
		const steps = Math.ceil(Math.abs(last[0] - first[0]) / 90);
		for (let s = 0; s <= steps; s++) {
			out.push([last[0] + ((first[0] - last[0]) * s) / steps, pole]);
		}
		out.push([first[0], first[1]]);
	}
	return out;
}

/** Moves a ring by whole turns so the middle of its longitudes lies nearest `target`. */
function shiftTowards(ring: Position[], target: number): Position[] {
	let west = Infinity;
	let east = -Infinity;
	for (const [lon] of ring) {
		west = Math.min(west, lon);
		east = Math.max(east, lon);
	}
	const shift = -360 * Math.round(((west + east) / 2 - target) / 360);
	return shift === 0 ? ring : ring.map(([lon, lat]) => [lon + shift, lat]);
}

/** Rounded, without repeated vertices, closed; null when nothing with an area remains. */
function tidy(ring: readonly Position[]): Position[] | null {
	const out: Position[] = [];
	for (const [lon, lat] of ring) {
		const p: Position = [round(lon), round(lat)];
		const previous = out[out.length - 1];
		if (!previous || previous[0] !== p[0] || previous[1] !== p[1]) out.push(p);
	}
	const first = out[0];
	const last = out[out.length - 1];
	if (first && (first[0] !== last[0] || first[1] !== last[1])) out.push([first[0], first[1]]);
	return out.length >= 4 && signedArea(out) !== 0 ? out : null;
}

/** RFC 7946 §3.1.6: exterior rings counter-clockwise, holes clockwise. */
function wind(ring: Position[], exterior: boolean): Position[] {
	return signedArea(ring) > 0 === exterior ? ring : ring.slice().reverse();
}

function bboxOf(ring: readonly Position[]): LandPolygon['bbox'] {
	let west = Infinity;
	let south = Infinity;
	let east = -Infinity;
	let north = -Infinity;
	for (const [lon, lat] of ring) {
		west = Math.min(west, lon);
		east = Math.max(east, lon);
		south = Math.min(south, lat);
		north = Math.max(north, lat);
	}
	return [west, south, east, north];
}

/** Land polygons from a world-atlas topology, ready for a flat map. Exported for tests. */
export function landPolygonsFromTopology(topology: Topology): LandPolygon[] {
	const land = feature(topology, topology.objects.land as GeometryCollection) as
		FeatureCollection<Polygon | MultiPolygon> | Feature<Polygon | MultiPolygon>;
	const geometries = land.type === 'FeatureCollection' ? land.features.map((f) => f.geometry) : [];
	if (land.type === 'Feature') geometries.push(land.geometry);

	const polygons: LandPolygon[] = [];
	for (const geometry of geometries) {
		const list = geometry.type === 'Polygon' ? [geometry.coordinates] : geometry.coordinates;
		for (const polygon of list) {
			const [outerRaw, ...holesRaw] = polygon as Position[][];
			const outerUnwrapped = tidy(shiftTowards(unwrapRing(outerRaw), 0));
			if (!outerUnwrapped) continue;
			const outer = wind(outerUnwrapped, true);
			const bbox = bboxOf(outer);
			const centre = (bbox[0] + bbox[2]) / 2;
			const holes: Position[][] = [];
			for (const hole of holesRaw) {
				if (hole.every(([, lat]) => Math.abs(lat) >= POLE_RING_LAT)) continue;
				const tidied = tidy(shiftTowards(unwrapRing(hole), centre));
				if (tidied) holes.push(wind(tidied, false));
			}
			polygons.push({ rings: [outer, ...holes], bbox });
		}
	}
	return polygons;
}

let cachedPolygons: LandPolygon[] | undefined;

/** Natural Earth 1:50m land, read once per process on first use. */
export function landPolygons(): LandPolygon[] {
	if (!cachedPolygons) {
		const require = createRequire(import.meta.url);
		const file = require.resolve('world-atlas/land-50m.json');
		cachedPolygons = landPolygonsFromTopology(JSON.parse(readFileSync(file, 'utf8')) as Topology);
	}
	return cachedPolygons;
}

/** The land as GeoJSON (RFC 7946): one Polygon feature per landmass, no properties. */
export function landGeoJSON(): FeatureCollection<Polygon, null> {
	return {
		type: 'FeatureCollection',
		features: landPolygons().map((p) => ({
			type: 'Feature',
			geometry: { type: 'Polygon', coordinates: p.rings },
			properties: null
		}))
	};
}

export type LandEncoding = 'br' | 'gzip' | 'identity';

export interface LandBody {
	bytes: Uint8Array<ArrayBuffer>;
	etag: string;
}

const brotli = promisify(brotliCompress);
const gzipAsync = promisify(gzip);
const cachedBodies = new Map<LandEncoding, Promise<LandBody>>();

function asBody(bytes: Uint8Array): LandBody {
	const copy = new Uint8Array(new ArrayBuffer(bytes.byteLength));
	copy.set(bytes);
	return { bytes: copy, etag: strongEtag(copy) };
}

async function encode(encoding: LandEncoding): Promise<LandBody> {
	const json = Buffer.from(JSON.stringify(landGeoJSON()));
	if (encoding === 'br') {
		return asBody(
			await brotli(json, {
				params: {
					[zlib.BROTLI_PARAM_QUALITY]: 11,
					[zlib.BROTLI_PARAM_SIZE_HINT]: json.byteLength
				}
			})
		);
	}
	if (encoding === 'gzip') return asBody(await gzipAsync(json, { level: 9 }));
	return asBody(json);
}

/**
 * The serialised land GeoJSON in one content coding, with a strong ETag of exactly those bytes
 * (RFC 9110 §8.8.3: each representation has its own tag). Computed once per process and coding,
 * off the main thread for the compressed ones: 1.25 MB of JSON is ~0.27 MB as Brotli.
 */
export function landGeoJSONBody(encoding: LandEncoding = 'identity'): Promise<LandBody> {
	let body = cachedBodies.get(encoding);
	if (!body) {
		body = encode(encoding);
		cachedBodies.set(encoding, body);
		body.catch(() => cachedBodies.delete(encoding));
	}
	return body;
}

/** The best coding the client accepts (RFC 9110 §12.5.3), preferring Brotli, then gzip. */
export function preferredEncoding(acceptEncoding: string | null): LandEncoding {
	if (!acceptEncoding) return 'identity';
	const weights = new Map<string, number>();
	for (const part of acceptEncoding.split(',')) {
		const [name, ...params] = part.trim().toLowerCase().split(';');
		if (!name) continue;
		const q = params.map((p) => p.trim()).find((p) => p.startsWith('q='));
		const weight = q ? Number(q.slice(2)) : 1;
		weights.set(name.trim(), Number.isFinite(weight) ? weight : 0);
	}
	const weightOf = (coding: string) => weights.get(coding) ?? weights.get('*') ?? 0;
	if (weightOf('br') > 0) return 'br';
	if (weightOf('gzip') > 0) return 'gzip';
	return 'identity';
}
