import { jsonError, jsonWithEtag } from '$lib/server/http';
import { getPublicProfile } from '$lib/server/patients';
import type { RequestHandler } from './$types';

/** One public profile; hidden and unknown patients answer the same 404. */
export const GET: RequestHandler = async ({ params, request }) => {
	const patient = await getPublicProfile(params.slug);
	if (!patient) return jsonError(404, 'There is no public patient at this address.');
	return jsonWithEtag(request, { patient });
};
