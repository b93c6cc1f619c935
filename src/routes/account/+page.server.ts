import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { accountAdoptions } from '$lib/server/adoptions/account';
import { changePassword } from '$lib/server/auth/accounts';
import { requireRoles } from '$lib/server/auth/roles';
import { newPassword, parseForm, fieldError } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

const passwordForm = z
	.object({
		current: z.string().min(1, 'Enter your current password.'),
		password: newPassword,
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, {
		path: ['confirm'],
		message: 'The two passwords differ.'
	});

export const load: PageServerLoad = async (event) => {
	const user = requireRoles(event);
	const adoptions = await accountAdoptions(user.id);
	return {
		account: { name: user.name, email: user.email, roles: user.roles },
		// The supporter's own adoptions; the payer's e-mail stays on the server.
		adoptions: adoptions.map(({ supporterEmail: _payer, ...rest }) => rest)
	};
};

export const actions: Actions = {
	password: async (event) => {
		const user = requireRoles(event);
		const parsed = parseForm(passwordForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors });
		if (!(await changePassword(user.id, parsed.data.current, parsed.data.password))) {
			return fail(400, { errors: fieldError('current', 'That is not your current password.') });
		}
		return { saved: 'Your password is changed.' };
	}
};
