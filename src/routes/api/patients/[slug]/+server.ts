import { jsonError, jsonWithEtag } from '$lib/server/http';
import { getPublicProfile } from '$lib/server/patients';
import { publicRead } from '$lib/server/public-cache';
import type { RequestHandler } from './$types';

/** One public profile; hidden and unknown patients answer the same 404. */
export const GET: RequestHandler = async ({ params, request }) => {
	const patient = await publicRead(`profile:${params.slug}`, () => getPublicProfile(params.slug));
	if (!patient) return jsonError(404, 'There is no public patient at this address.');
	return jsonWithEtag(request, { patient });
};
