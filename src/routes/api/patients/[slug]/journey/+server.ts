import { withEtag } from '$lib/server/http';
import { jsonError } from '$lib/server/http';
import { getPublicJourney } from '$lib/server/journeys/public';
import type { RequestHandler } from './$types';

/**
 * The public projection of a patient's journey as GeoJSON (RFC 7946): coarse cells and the line
 * between them, dates only, distance rounded. Served from the stored projection with its ETag.
 */
export const GET: RequestHandler = async ({ params, request }) => {
	const journey = await getPublicJourney(params.slug);
	if (!journey) return jsonError(404, 'There is no public journey for this patient.');
	return withEtag(request, JSON.stringify(journey.geojson), {
		etag: journey.etag,
		headers: { 'content-type': 'application/geo+json; charset=utf-8' }
	});
};
