import { jsonError, jsonWithEtag } from '$lib/server/http';
import { listPublicPatients } from '$lib/server/patients';
import { parsePatientListQuery } from '$lib/server/public-queries';
import type { RequestHandler } from './$types';

/** Public patient cards, filtered by species, status and part of the name. */
export const GET: RequestHandler = async ({ url, request }) => {
	const query = parsePatientListQuery(url.searchParams);
	if (!query.ok) return jsonError(400, query.message);
	const patients = await listPublicPatients(query.value);
	return jsonWithEtag(request, { patients });
};
