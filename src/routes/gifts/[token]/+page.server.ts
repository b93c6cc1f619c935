import { error, fail } from '@sveltejs/kit';
import { claimGift, giftForClaim } from '$lib/server/adoptions/gifts';
import { requireRoles } from '$lib/server/auth/roles';
import type { Actions, PageServerLoad } from './$types';

// The link in a gift notice. Whoever holds it sees the gift (the link is the secret, as for a
// sign-in link); keeping it in an account needs that account to be signed in.
export const load: PageServerLoad = async ({ params, locals, url }) => {
	const gift = await giftForClaim(params.token);
	if (!gift) error(404, 'This gift link is not known. Check that the whole address was copied.');
	const back = encodeURIComponent(url.pathname);
	return {
		gift: {
			recipientName: gift.recipientName,
			giverName: gift.supporterName,
			giftMessage: gift.giftMessage,
			patientName: gift.patientName,
			patientSlug: gift.patientSlug,
			levelName: gift.levelName,
			ended: gift.status !== 'active'
		},
		claim: !gift.recipientId
			? 'open'
			: gift.recipientId === locals.user?.id
				? 'yours'
				: ('taken' as 'open' | 'yours' | 'taken'),
		signedIn: locals.user ? { name: locals.user.name, email: locals.user.email } : null,
		signInHref: `/signin?redirectTo=${back}`,
		signUpHref: `/signup?redirectTo=${back}`
	};
};

export const actions: Actions = {
	default: async (event) => {
		const user = requireRoles(event);
		const outcome = await claimGift(event.params.token, user.id);
		if (outcome === 'unknown') error(404, 'This gift link is not known.');
		if (outcome === 'taken') {
			return fail(409, { message: 'This gift is already kept in another account.' });
		}
		return { claimed: true };
	}
};
