import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { checkPassword, sendSignInLink } from '$lib/server/auth/accounts';
import {
	assertSignInAllowed,
	clearFailedSignIns,
	consumeMailAllowance,
	recordFailedSignIn,
	TooManyAttempts
} from '$lib/server/auth/rate-limit';
import { homeFor } from '$lib/server/auth/landing';
import { startSession } from '$lib/server/auth/session';
import { email, parseForm, safeRedirect } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

const passwordForm = z.object({
	email,
	password: z.string({ error: 'Enter your password.' }).min(1, 'Enter your password.'),
	redirectTo: z.string().optional()
});
const linkForm = z.object({ email, redirectTo: z.string().optional() });

// The one message for any wrong e-mail or password, so the form never tells which was wrong.
const WRONG = 'That e-mail and password do not match an account.';

export const load: PageServerLoad = ({ locals, url }) => {
	if (locals.user) redirect(303, safeRedirect(url.searchParams.get('redirectTo'), '/account'));
	return { redirectTo: safeRedirect(url.searchParams.get('redirectTo'), '') };
};

export const actions: Actions = {
	password: async ({ request, cookies, url, getClientAddress }) => {
		const parsed = parseForm(passwordForm, await request.formData());
		if (!parsed.ok)
			return fail(400, { form: 'password', errors: parsed.errors, values: parsed.values });
		const { email, password, redirectTo } = parsed.data;
		const address = getClientAddress();
		try {
			await assertSignInAllowed(email, address);
		} catch (error) {
			if (!(error instanceof TooManyAttempts)) throw error;
			return fail(429, { form: 'password', message: error.message, values: { email } });
		}
		const userId = await checkPassword(email, password);
		if (!userId) {
			await recordFailedSignIn(email, address);
			return fail(400, { form: 'password', message: WRONG, values: { email } });
		}
		await clearFailedSignIns(email);
		await startSession(userId, cookies, url);
		redirect(303, safeRedirect(redirectTo, await homeFor(userId)));
	},

	link: async ({ request, getClientAddress }) => {
		const parsed = parseForm(linkForm, await request.formData());
		if (!parsed.ok)
			return fail(400, { form: 'link', errors: parsed.errors, values: parsed.values });
		try {
			await consumeMailAllowance(getClientAddress());
		} catch (error) {
			if (!(error instanceof TooManyAttempts)) throw error;
			return fail(429, { form: 'link', message: error.message, values: parsed.values });
		}
		await sendSignInLink(parsed.data.email, safeRedirect(parsed.data.redirectTo, '/account'));
		return {
			form: 'link',
			sent: `If ${parsed.data.email} belongs to an account, a sign-in link is on its way. It works once, for 20 minutes.`
		};
	}
};
