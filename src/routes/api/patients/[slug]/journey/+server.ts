import { withEtag } from '$lib/server/http';
import { jsonError } from '$lib/server/http';
import { getPublicJourney } from '$lib/server/journeys/public';
import { publicRead } from '$lib/server/public-cache';
import type { RequestHandler } from './$types';

/**
 * The public projection of a patient's journey as GeoJSON (RFC 7946): coarse cells and the line
 * between them, dates only, distance rounded. Served from the stored projection with its ETag.
 */
export const GET: RequestHandler = async ({ params, request }) => {
	// The body is serialised once per cache lifetime; a 304 costs a lookup and a comparison.
	const journey = await publicRead(`journey:${params.slug}`, async () => {
		const record = await getPublicJourney(params.slug);
		return record && { etag: record.etag, body: JSON.stringify(record.geojson) };
	});
	if (!journey) return jsonError(404, 'There is no public journey for this patient.');
	return withEtag(request, journey.body, {
		etag: journey.etag,
		headers: { 'content-type': 'application/geo+json; charset=utf-8' }
	});
};
