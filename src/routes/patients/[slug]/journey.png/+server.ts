import { error } from '@sveltejs/kit';
import { ifNoneMatchMatches, notModified } from '$lib/server/http';
import { getPublicJourney } from '$lib/server/journeys/public';
import { renderJourneyPng } from '$lib/server/map/static-map';
import type { RequestHandler } from './$types';

/** Changes whenever the drawing changes, so that old ETags stop matching. */
const DRAWING = 'journey-map-1';

/**
 * A still map of the public journey (600 × 340 PNG), for e-mails, share images and browsers
 * without WebGL. Drawn from the stored public projection only.
 */
export const GET: RequestHandler = async ({ params, request }) => {
	const journey = await getPublicJourney(params.slug);
	const hasCells = journey?.geojson.features.some((f) => f.properties.kind === 'cell');
	if (!journey || !hasCells) error(404, 'There is no public journey for this patient yet.');
	const etag = `"${DRAWING}-${journey.etag.replaceAll('"', '')}"`;
	const headers = { 'cache-control': 'public, max-age=3600', etag };
	if (ifNoneMatchMatches(request, etag)) return notModified(etag, headers);
	const png = await renderJourneyPng(journey.geojson);
	return new Response(new Uint8Array(png), {
		headers: { ...headers, 'content-type': 'image/png' }
	});
};
