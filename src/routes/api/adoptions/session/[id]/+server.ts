import { json } from '@sveltejs/kit';
import { adoptionForSession } from '$lib/server/adoptions/checkout';
import { jsonError } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * What the thank-you page polls until the processor's webhook has arrived. The checkout session
 * id is long and random, known only to whoever paid; the answer names no person.
 */
export const GET: RequestHandler = async ({ params }) => {
	if (!/^cs_[A-Za-z0-9_]{8,200}$/.test(params.id)) return jsonError(404, 'Unknown checkout.');
	const adoption = await adoptionForSession(params.id);
	if (!adoption) return jsonError(404, 'Unknown checkout.');
	const { recipientName: _recipient, ...visible } = adoption;
	return json(visible, { headers: { 'cache-control': 'no-store' } });
};
