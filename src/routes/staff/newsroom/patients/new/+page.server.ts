import { fail, redirect } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import { NewsroomRefusal } from '$lib/server/newsroom/patient-rules';
import { createPatient } from '$lib/server/newsroom/patients';
import { STAFF_AREAS } from '$lib/staff-areas';
import { patientForm } from '../patient-form';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.newsroom.roles;
const CHECK_FIELDS = 'Some fields need attention; see the messages beside them.';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	return { today: new Date().toISOString().slice(0, 10) };
};

export const actions: Actions = {
	create: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(patientForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { message: CHECK_FIELDS, errors: parsed.errors, values: parsed.values });
		}
		let id: string;
		try {
			({ id } = await createPatient(parsed.data, actor));
		} catch (error) {
			if (error instanceof NewsroomRefusal) {
				return fail(400, { message: error.message, errors: error.errors, values: parsed.values });
			}
			throw error;
		}
		redirect(303, `/staff/newsroom/patients/${id}?created=1`);
	}
};
