import workerUrl from 'maplibre-gl/dist/maplibre-gl-worker.mjs?url';

/**
 * MapLibre, imported on demand (STACK.md item 6): call it from onMount only, so that its chunk
 * of about 1 MB loads on pages that show a map and never during server rendering.
 */
export async function loadMapLibre(): Promise<typeof import('maplibre-gl')> {
	const maplibre = await import('maplibre-gl');
	maplibre.setWorkerUrl(workerUrl);
	return maplibre;
}
