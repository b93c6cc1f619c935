import { error } from '@sveltejs/kit';
import { and, eq } from 'drizzle-orm';
import { db } from '$lib/server/db';
import { mediaVariants } from '$lib/server/db/schema';
import { nearestWidth } from '$lib/media';
import type { RequestHandler } from './$types';

// Public on purpose: published photos are public, and every stored variant was re-encoded
// without metadata. Variants never change once stored, so caches may keep them for a year.
const ID = /^[A-Za-z0-9_-]{1,64}$/;
const FILE = /^([1-9][0-9]{0,4})\.(webp|jpeg)$/;
const CONTENT_TYPES = { webp: 'image/webp', jpeg: 'image/jpeg' } as const;
const CACHE_CONTROL = 'public, max-age=31536000, immutable';

export const GET: RequestHandler = async ({ params, request }) => {
	const file = FILE.exec(params.file);
	if (!ID.test(params.id) || !file) error(404, 'No such photo.');
	const wanted = Number(file[1]);
	const format = file[2] as keyof typeof CONTENT_TYPES;

	const where = and(eq(mediaVariants.mediaId, params.id), eq(mediaVariants.format, format));
	const stored = await db()
		.select({ width: mediaVariants.width, etag: mediaVariants.etag })
		.from(mediaVariants)
		.where(where);
	if (stored.length === 0) error(404, 'No such photo.');
	const width = nearestWidth(
		stored.map((v) => v.width),
		wanted
	);
	const etag = stored.find((v) => v.width === width)!.etag;
	const headers = {
		etag,
		'cache-control': CACHE_CONTROL,
		'x-content-type-options': 'nosniff'
	};
	if (matchesEtag(request.headers.get('if-none-match'), etag)) {
		return new Response(null, { status: 304, headers });
	}

	const [variant] = await db()
		.select({ bytes: mediaVariants.bytes })
		.from(mediaVariants)
		.where(and(where, eq(mediaVariants.width, width)));
	if (!variant) error(404, 'No such photo.');
	return new Response(new Uint8Array(variant.bytes), {
		headers: {
			...headers,
			'content-type': CONTENT_TYPES[format],
			'content-length': String(variant.bytes.length)
		}
	});
};

/** If-None-Match uses weak comparison (RFC 9110 §13.1.2): W/ prefixes are ignored. */
function matchesEtag(header: string | null, etag: string): boolean {
	if (!header) return false;
	if (header.trim() === '*') return true;
	return header.split(',').some((tag) => tag.trim().replace(/^W\//, '') === etag);
}
