import { error, fail } from '@sveltejs/kit';
import { parseForm } from '$lib/server/forms';
import { CATEGORY_LABELS, preferencesForm, UPDATE_CATEGORIES } from '$lib/server/mail/preferences';
import { preferencesByToken, savePreferencesByToken } from '$lib/server/updates/unsubscribe';
import type { Actions, PageServerLoad } from './$types';

// The page a footer link opens: the address's e-mail choices, without signing in (the signed
// token in the link is the key, as for the one-click unsubscribe).
export const load: PageServerLoad = async ({ params, setHeaders }) => {
	setHeaders({ 'cache-control': 'private, no-store' });
	const found = await preferencesByToken(params.token);
	if (!found) error(400, 'This link is not valid. Use the link from your most recent e-mail.');
	return {
		email: found.target.email,
		from: found.target.category,
		preferences: found.preferences,
		categories: UPDATE_CATEGORIES.map((c) => ({ name: c, ...CATEGORY_LABELS[c] }))
	};
};

export const actions: Actions = {
	default: async ({ params, request }) => {
		const parsed = parseForm(preferencesForm, await request.formData());
		if (!parsed.ok) return fail(400, { message: 'Those choices could not be read.' });
		if (!(await savePreferencesByToken(params.token, parsed.data))) {
			return fail(400, { message: 'This link is not valid; nothing was changed.' });
		}
		return { saved: 'Your e-mail choices are saved. They apply at once.' };
	}
};
