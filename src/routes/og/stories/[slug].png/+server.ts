import { shareCardResponse, storyShareCard } from '$lib/server/og/card';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ params, request }) =>
	shareCardResponse(request, await storyShareCard(params.slug));
