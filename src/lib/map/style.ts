import type { FeatureCollection, MultiLineString } from 'geojson';
import type { StyleSpecification } from 'maplibre-gl';
import { MAP_COLOURS } from './colours';

export { MAP_COLOURS };

// The basemap style for every interactive map: our own land, a graticule, and nothing fetched
// from another server. There are no text layers, so the style needs no glyphs and no sprite;
// labels are HTML beside the map.

/** Served by src/routes/map/land.json; resolved against the page's origin by MapLibre. */
export const LAND_URL = '/map/land.json';

/** Meridians and parallels every `step` degrees (parallels stop at ±80°, as Mercator does). */
export function graticule(step = 10): FeatureCollection<MultiLineString> {
	const lines: [number, number][][] = [];
	for (let lon = -180; lon <= 180; lon += step) {
		const meridian: [number, number][] = [];
		for (let lat = -80; lat <= 80; lat += step / 2) meridian.push([lon, lat]);
		lines.push(meridian);
	}
	for (let lat = -80; lat <= 80; lat += step) {
		const parallel: [number, number][] = [];
		for (let lon = -180; lon <= 180; lon += step / 2) parallel.push([lon, lat]);
		lines.push(parallel);
	}
	return {
		type: 'FeatureCollection',
		features: [
			{ type: 'Feature', geometry: { type: 'MultiLineString', coordinates: lines }, properties: {} }
		]
	};
}

export interface BaseStyleOptions {
	/** Draw meridians and parallels every 10°; default true. */
	graticule?: boolean;
}

/**
 * Background (sea), graticule, land and coastline. Journey layers are added on top by the map
 * components, so their ids here are the basemap's only.
 */
export function baseStyle(options: BaseStyleOptions = {}): StyleSpecification {
	const withGraticule = options.graticule ?? true;
	const style: StyleSpecification = {
		version: 8,
		sources: {
			land: { type: 'geojson', data: LAND_URL, maxzoom: 10, tolerance: 0.5 }
		},
		layers: [{ id: 'sea', type: 'background', paint: { 'background-color': MAP_COLOURS.sea } }]
	};
	if (withGraticule) {
		style.sources.graticule = { type: 'geojson', data: graticule(10) };
		style.layers.push({
			id: 'graticule',
			type: 'line',
			source: 'graticule',
			paint: { 'line-color': MAP_COLOURS.graticule, 'line-width': 0.6 }
		});
	}
	style.layers.push(
		{
			id: 'land',
			type: 'fill',
			source: 'land',
			paint: { 'fill-color': MAP_COLOURS.land, 'fill-antialias': true }
		},
		{
			id: 'coast',
			type: 'line',
			source: 'land',
			paint: {
				'line-color': MAP_COLOURS.coast,
				'line-width': ['interpolate', ['linear'], ['zoom'], 2, 0.4, 8, 1.2]
			}
		}
	);
	return style;
}
