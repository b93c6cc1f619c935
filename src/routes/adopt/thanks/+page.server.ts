import { error } from '@sveltejs/kit';
import { adoptionForSession } from '$lib/server/adoptions/checkout';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ url }) => {
	const sessionId = url.searchParams.get('session_id') ?? '';
	if (!/^cs_[A-Za-z0-9_]{8,200}$/.test(sessionId)) error(404, 'Unknown checkout.');
	const adoption = await adoptionForSession(sessionId);
	if (!adoption) error(404, 'Unknown checkout.');
	return { sessionId, adoption };
};
