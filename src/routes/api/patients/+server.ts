import { jsonError, strongEtag, withEtag } from '$lib/server/http';
import { publicRead } from '$lib/server/public-cache';
import { listPublicPatients } from '$lib/server/patients';
import { parsePatientListQuery } from '$lib/server/public-queries';
import type { RequestHandler } from './$types';

/** Public patient cards, filtered by species, status and part of the name. */
export const GET: RequestHandler = async ({ url, request }) => {
	const query = parsePatientListQuery(url.searchParams);
	if (!query.ok) return jsonError(400, query.message);
	// Serialised and tagged once per cache lifetime: a 304 costs a lookup and a comparison.
	const answer = await publicRead(`api:patients:${JSON.stringify(query.value)}`, async () => {
		const body = JSON.stringify({ patients: await listPublicPatients(query.value) });
		return { body, etag: strongEtag(body) };
	});
	return withEtag(request, answer.body, {
		etag: answer.etag,
		headers: { 'content-type': 'application/json; charset=utf-8' }
	});
};
