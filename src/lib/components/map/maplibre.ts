import workerUrl from 'maplibre-gl/dist/maplibre-gl-worker.mjs?url';

/**
 * MapLibre and its stylesheet, imported on demand (STACK.md item 6): call it from the browser
 * only, so that the chunk of about 1 MB and its CSS load on pages that show a map, and never
 * during server rendering. The journey map calls it once the map nears the screen, so that a
 * reader who never scrolls to the map never downloads it.
 */
export async function loadMapLibre(): Promise<typeof import('maplibre-gl')> {
	const [maplibre] = await Promise.all([
		import('maplibre-gl'),
		import('maplibre-gl/dist/maplibre-gl.css')
	]);
	maplibre.setWorkerUrl(workerUrl);
	return maplibre;
}
