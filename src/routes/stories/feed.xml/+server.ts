import { storiesFeed } from '$lib/server/feeds';
import { withEtag } from '$lib/server/http';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ request }) =>
	withEtag(request, (await storiesFeed()).atom1(), {
		headers: { 'content-type': 'application/atom+xml; charset=utf-8' }
	});
