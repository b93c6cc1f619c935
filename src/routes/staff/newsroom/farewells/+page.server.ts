import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import {
	approveFarewell,
	FAREWELL_LIMITS,
	FarewellRefused,
	pendingFarewells,
	withholdFarewell
} from '$lib/server/updates/farewells';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	const waiting = await pendingFarewells();
	return {
		limits: FAREWELL_LIMITS,
		waiting: waiting.map((w) => ({
			id: w.id,
			patientId: w.patientId,
			patientName: w.patientName,
			patientStatus: w.patientStatus,
			publicTreatment: w.publicTreatment,
			since: w.occurredAt.toISOString().slice(0, 10),
			silenceDays: Number((w.payload as { silenceDays?: number }).silenceDays ?? 0)
		}))
	};
};

const eventId = z.coerce.number({ error: 'Choose a note.' }).int().positive('Choose a note.');
const approveForm = z.object({
	eventId,
	message: z
		.string()
		.trim()
		.min(FAREWELL_LIMITS.min, `Write at least ${FAREWELL_LIMITS.min} characters.`)
		.max(FAREWELL_LIMITS.max, `Keep the note under ${FAREWELL_LIMITS.max} characters.`)
});
const withholdForm = z.object({ eventId });

export const actions: Actions = {
	approve: async (event) => {
		const user = requireRoles(event, ...STAFF_AREAS.newsroom.roles);
		const parsed = parseForm(approveForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, {
				errors: parsed.errors,
				values: parsed.values,
				eventId: parsed.values.eventId
			});
		}
		try {
			await approveFarewell(parsed.data.eventId, parsed.data.message, user.id);
		} catch (problem) {
			if (problem instanceof FarewellRefused) {
				return fail(409, {
					errors: { message: problem.message },
					eventId: String(parsed.data.eventId)
				});
			}
			throw problem;
		}
		return { done: 'The note is approved; supporters receive it with the next sending.' };
	},
	withhold: async (event) => {
		const user = requireRoles(event, ...STAFF_AREAS.newsroom.roles);
		const parsed = parseForm(withholdForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors });
		try {
			await withholdFarewell(parsed.data.eventId, user.id);
		} catch (problem) {
			if (problem instanceof FarewellRefused) {
				return fail(409, {
					errors: { message: problem.message },
					eventId: String(parsed.data.eventId)
				});
			}
			throw problem;
		}
		return { done: 'Nothing will be sent for that patient’s last signal.' };
	}
};
