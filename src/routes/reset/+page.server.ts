import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { sendPasswordReset } from '$lib/server/auth/accounts';
import { consumeMailAllowance, TooManyAttempts } from '$lib/server/auth/rate-limit';
import { email, parseForm } from '$lib/server/forms';
import type { Actions } from './$types';

const resetForm = z.object({ email });

export const actions: Actions = {
	default: async ({ request, getClientAddress }) => {
		const parsed = parseForm(resetForm, await request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		try {
			await consumeMailAllowance(getClientAddress());
		} catch (error) {
			if (error instanceof TooManyAttempts) return fail(429, { message: error.message });
			throw error;
		}
		await sendPasswordReset(parsed.data.email);
		return {
			sent: `If ${parsed.data.email} belongs to an account, a link to choose a new password is on its way.`
		};
	}
};
