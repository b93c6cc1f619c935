import { withEtag } from '$lib/server/http';
import { sitemapEntries, sitemapXml } from '$lib/server/sitemap';
import type { RequestHandler } from './$types';

export const GET: RequestHandler = async ({ request }) =>
	withEtag(request, sitemapXml(await sitemapEntries()), {
		headers: { 'content-type': 'application/xml; charset=utf-8' }
	});
