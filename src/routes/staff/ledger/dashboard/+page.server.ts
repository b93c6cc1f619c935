import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import { dashboard, ReminderRefused, sendPaymentReminder } from '$lib/server/ledger/dashboard';
import { getOrganisationSettings } from '$lib/server/settings';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.ledger.roles;

const remindForm = z.object({
	adoptionId: z
		.string({ error: 'Choose an adoption from the list.' })
		.trim()
		.min(1, 'Choose an adoption from the list.')
		.max(100, 'Choose an adoption from the list.')
});

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const [figures, settings] = await Promise.all([dashboard(12), getOrganisationSettings()]);
	return {
		currency: settings.currency.toUpperCase(),
		byMonth: figures.byMonth,
		supporters: figures.supporters,
		failedToFollowUp: figures.failedToFollowUp.map((f) => ({
			adoptionId: f.adoptionId,
			supporterName: f.supporterName,
			supporterEmail: f.supporterEmail,
			patientName: f.patientName,
			amountCents: f.amountCents,
			currency: f.currency.toUpperCase(),
			failureMessage: f.failureMessage,
			failedOn: f.failedOn,
			remindedToday: f.remindedToday
		})),
		topPatients: figures.topPatients
	};
};

export const actions: Actions = {
	remind: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(remindForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, {
				adoptionId: null,
				message: Object.values(parsed.errors)[0],
				errors: parsed.errors,
				values: parsed.values
			});
		}
		const { adoptionId } = parsed.data;
		try {
			const queued = await sendPaymentReminder(adoptionId, actor.id);
			return {
				adoptionId,
				done: queued
					? 'Reminder queued: the supporter gets the failed-payment notice again, with the link to update the card.'
					: 'A reminder for this payment already went out today, so nothing more was sent.'
			};
		} catch (err) {
			if (err instanceof ReminderRefused) return fail(400, { adoptionId, message: err.message });
			throw err;
		}
	}
};
