import { fail, redirect } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import { ManualGiftRefused, manualGiftForm, recordManualGift } from '$lib/server/ledger/gifts';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.ledger.roles;

export const load: PageServerLoad = (event) => {
	requireRoles(event, ...area);
	return {
		// The gift date is checked against today in UTC, as recordManualGift does.
		today: new Date().toISOString().slice(0, 10),
		supporterEmail: event.url.searchParams.get('email')?.slice(0, 254) ?? ''
	};
};

export const actions: Actions = {
	default: async (event) => {
		const user = requireRoles(event, ...area);
		const parsed = parseForm(manualGiftForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		try {
			await recordManualGift(parsed.data, user.id);
		} catch (err) {
			if (err instanceof ManualGiftRefused) {
				return fail(400, { errors: { [err.field]: err.message }, values: parsed.values });
			}
			throw err;
		}
		redirect(303, '/staff/ledger/gifts?interval=manual');
	}
};
