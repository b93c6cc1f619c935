import { storiesFeed } from '$lib/server/feeds';
import { withEtag } from '$lib/server/http';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ request }) =>
	withEtag(request, (await storiesFeed()).rss2(), {
		headers: { 'content-type': 'application/rss+xml; charset=utf-8' }
	});
