import { ifNoneMatchMatches, notModified, withEtag } from '$lib/server/http';
import { landGeoJSONBody, preferredEncoding } from '$lib/server/map/basemap';
import type { RequestHandler } from './$types';

// The basemap's land (Natural Earth, public domain). Public on purpose: it holds no patient data,
// so it sits outside /api and needs no role check. It changes only with a new build.
const CACHING = { 'cache-control': 'public, max-age=86400', vary: 'Accept-Encoding' };

export const GET: RequestHandler = async ({ request }) => {
	const encoding = preferredEncoding(request.headers.get('accept-encoding'));
	const { bytes, etag } = await landGeoJSONBody(encoding);
	if (ifNoneMatchMatches(request, etag)) return notModified(etag, CACHING);
	const headers = new Headers({ ...CACHING, 'content-type': 'application/geo+json' });
	if (encoding !== 'identity') headers.set('content-encoding', encoding);
	return withEtag(request, bytes, { etag, headers });
};
