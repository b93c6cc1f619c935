// The interactive half of JourneyMap: loaded with MapLibre once the map nears the screen, so that
// the page's own script stays small. The text summary, legend and replay slider stay in the
// component, rendered on the server.
import type { FeatureCollection, LineString, Point } from 'geojson';
import type { GeoJSONSource, Map as MapLibreMap } from 'maplibre-gl';
import { boundsOf } from '$lib/map/geometry';
import type { JourneyCell } from '$lib/map/journey-cells';
import { baseStyle, MAP_COLOURS } from '$lib/map/style';
import type { Position } from '$lib/map/types';
import { loadMapLibre } from './maplibre';

export interface JourneyMapOptions {
	container: HTMLElement;
	/** The public cells, and their centres with continuous longitudes (index for index). */
	cells: readonly JourneyCell[];
	path: readonly Position[];
	/** Accessible name of the map. */
	label: string;
	/** How many cells the replay shows at first. */
	reached: number;
	/** Called once the basemap and the journey are drawn. */
	onready: () => void;
}

export interface JourneyMapView {
	/** Shows the first `count` cells of the journey (the replay slider). */
	showUpTo(count: number): void;
	remove(): void;
}

function lineData(path: readonly Position[], count: number): FeatureCollection<LineString> {
	return {
		type: 'FeatureCollection',
		features:
			count >= 2
				? [
						{
							type: 'Feature',
							geometry: { type: 'LineString', coordinates: path.slice(0, count) },
							properties: {}
						}
					]
				: []
	};
}

function cellData(
	cells: readonly JourneyCell[],
	path: readonly Position[],
	count: number
): FeatureCollection<Point> {
	return {
		type: 'FeatureCollection',
		features: path.slice(0, count).map((coordinates, i) => ({
			type: 'Feature',
			geometry: { type: 'Point', coordinates },
			properties: {
				role: i === count - 1 ? 'latest' : i === 0 ? 'start' : 'cell',
				firstDate: cells[i].firstDate
			}
		}))
	};
}

function addJourneyLayers(m: MapLibreMap, line: FeatureCollection, points: FeatureCollection) {
	m.addSource('journey-line', { type: 'geojson', data: line });
	m.addSource('journey-cells', { type: 'geojson', data: points });
	m.addLayer({
		id: 'journey-line-halo',
		type: 'line',
		source: 'journey-line',
		layout: { 'line-join': 'round', 'line-cap': 'round' },
		paint: { 'line-color': '#ffffff', 'line-opacity': 0.7, 'line-width': 5 }
	});
	m.addLayer({
		id: 'journey-line',
		type: 'line',
		source: 'journey-line',
		layout: { 'line-join': 'round', 'line-cap': 'round' },
		paint: { 'line-color': MAP_COLOURS.track, 'line-width': 2.5 }
	});
	m.addLayer({
		id: 'journey-cells',
		type: 'circle',
		source: 'journey-cells',
		filter: ['==', ['get', 'role'], 'cell'],
		paint: {
			'circle-color': MAP_COLOURS.cell,
			'circle-radius': ['interpolate', ['linear'], ['zoom'], 2, 3, 8, 6],
			'circle-stroke-color': MAP_COLOURS.cellOutline,
			'circle-stroke-width': 1.2
		}
	});
	// The release is a ring, the latest area a large filled dot: told apart by shape too.
	m.addLayer({
		id: 'journey-start',
		type: 'circle',
		source: 'journey-cells',
		filter: ['==', ['get', 'role'], 'start'],
		paint: {
			'circle-color': '#ffffff',
			'circle-radius': 6,
			'circle-stroke-color': MAP_COLOURS.start,
			'circle-stroke-width': 3.5
		}
	});
	m.addLayer({
		id: 'journey-latest',
		type: 'circle',
		source: 'journey-cells',
		filter: ['==', ['get', 'role'], 'latest'],
		paint: {
			'circle-color': MAP_COLOURS.latest,
			'circle-radius': 7.5,
			'circle-stroke-color': MAP_COLOURS.cellOutline,
			'circle-stroke-width': 2.5
		}
	});
}

/** Draws the journey on the offline basemap; throws without WebGL 2 or when a chunk fails. */
export async function createJourneyMap(options: JourneyMapOptions): Promise<JourneyMapView> {
	const { container, cells, path, label } = options;
	const { Map, NavigationControl } = await loadMapLibre();
	const bounds = boundsOf(path);
	const map = new Map({
		container,
		style: baseStyle(),
		bounds: bounds ?? undefined,
		fitBoundsOptions: { padding: 48, maxZoom: 6, animate: false },
		maxZoom: 8,
		dragRotate: false,
		pitchWithRotate: false,
		touchPitch: false,
		cooperativeGestures: true,
		// The credit is a line of the legend instead: MapLibre's control opens and fills in once
		// the style has loaded, which moves it.
		attributionControl: false,
		locale: { 'Map.Title': label }
	});
	map.touchZoomRotate.disableRotation();
	map.addControl(new NavigationControl({ showCompass: false }), 'top-right');
	let shown = options.reached;
	let loaded = false;
	map.on('load', () => {
		addJourneyLayers(map, lineData(path, shown), cellData(cells, path, shown));
		loaded = true;
		options.onready();
	});
	return {
		showUpTo(count) {
			shown = count;
			if (!loaded) return;
			// setData answers when the worker has the data; nothing waits on it.
			void (map.getSource('journey-line') as GeoJSONSource | undefined)?.setData(
				lineData(path, count)
			);
			void (map.getSource('journey-cells') as GeoJSONSource | undefined)?.setData(
				cellData(cells, path, count)
			);
		},
		remove: () => map.remove()
	};
}
