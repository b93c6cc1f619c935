import { shareCardResponse, storiesShareCard } from '$lib/server/og/card';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ request }) =>
	shareCardResponse(request, await storiesShareCard());
