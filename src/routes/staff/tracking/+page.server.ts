import { fail } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import { deskOverview, getDeskSettings, saveDeskSettings } from '$lib/server/journeys/desk';
import { STAFF_AREAS } from '$lib/staff-areas';
import { deskSettingsForm } from './forms';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.tracking.roles;

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const [patients, settings] = await Promise.all([deskOverview(), getDeskSettings()]);
	return { patients, settings };
};

export const actions: Actions = {
	settings: async (event) => {
		const user = requireRoles(event, ...area);
		const parsed = parseForm(deskSettingsForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		const saved = await saveDeskSettings(parsed.data, user.id);
		if (!saved) {
			return fail(409, {
				errors: { form: 'Save the organisation settings first (Settings page).' },
				values: parsed.values
			});
		}
		return { saved: 'Tracking rules saved; every journey was computed again.' };
	}
};
