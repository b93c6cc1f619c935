import { fail, redirect } from '@sveltejs/kit';
import { useSignInLink } from '$lib/server/auth/accounts';
import { homeFor } from '$lib/server/auth/landing';
import { startSession } from '$lib/server/auth/session';
import { peekToken } from '$lib/server/auth/tokens';
import { db } from '$lib/server/db';
import { safeRedirect } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

// Opening the link only shows a button: mail scanners that fetch links must not use it up.
export const load: PageServerLoad = async ({ params, url }) => {
	const userId = await peekToken(db(), params.token, 'sign_in_link');
	return {
		usable: userId !== null,
		redirectTo: safeRedirect(url.searchParams.get('redirectTo'), '')
	};
};

export const actions: Actions = {
	default: async ({ params, cookies, url, request }) => {
		const form = await request.formData();
		const userId = await useSignInLink(params.token);
		if (!userId) {
			return fail(400, {
				message: 'This sign-in link has been used or has expired. Ask for a new one.'
			});
		}
		await startSession(userId, cookies, url);
		redirect(303, safeRedirect(String(form.get('redirectTo') ?? ''), await homeFor(userId)));
	}
};
