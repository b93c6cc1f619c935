import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { createSupporter, EmailTaken, sendSignInLink } from '$lib/server/auth/accounts';
import { consumeMailAllowance, TooManyAttempts } from '$lib/server/auth/rate-limit';
import { startSession } from '$lib/server/auth/session';
import { email, fieldError, name, newPassword, parseForm, safeRedirect } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

const signupForm = z.object({
	name,
	email,
	password: z.union([z.literal(''), newPassword]).optional(),
	redirectTo: z.string().optional()
});

export const load: PageServerLoad = ({ locals, url }) => {
	const redirectTo = safeRedirect(url.searchParams.get('redirectTo'), '');
	if (locals.user) redirect(303, redirectTo || '/account');
	return { redirectTo };
};

export const actions: Actions = {
	default: async ({ request, cookies, url, getClientAddress }) => {
		const parsed = parseForm(signupForm, await request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		const { name, email, password } = parsed.data;
		const next = safeRedirect(parsed.data.redirectTo, '/account');
		if (!password) {
			try {
				await consumeMailAllowance(getClientAddress());
			} catch (error) {
				if (error instanceof TooManyAttempts) {
					return fail(429, { message: error.message, values: parsed.values });
				}
				throw error;
			}
		}
		let userId: string;
		try {
			userId = await createSupporter({ name, email, password: password || undefined });
		} catch (error) {
			if (error instanceof EmailTaken) {
				return fail(400, { errors: fieldError('email', error.message), values: parsed.values });
			}
			throw error;
		}
		if (password) {
			await startSession(userId, cookies, url);
			redirect(303, next);
		}
		await sendSignInLink(email, next);
		return { sent: `Welcome! We e-mailed a sign-in link to ${email}.` };
	}
};
