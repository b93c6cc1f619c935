import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { audit } from '$lib/server/audit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { parseForm } from '$lib/server/forms';
import { getOrganisationSettings, updateOrganisationSettings } from '$lib/server/settings';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.settings.roles;
const text = (label: string, max: number) =>
	z
		.string({ error: `Enter the ${label}.` })
		.trim()
		.min(1, `Enter the ${label}.`)
		.max(max, `Keep the ${label} under ${max} characters.`);

const settingsForm = z.object({
	displayName: text('public name', 120),
	legalName: text('legal name', 200),
	taxId: text('tax ID', 40),
	postalAddress: text('postal address', 400),
	hotlineName: text('hotline name', 120),
	hotlineNumber: z
		.string()
		.trim()
		.regex(
			/^\+?[0-9 ().-]{7,25}$/,
			'Enter a phone number: digits, spaces, ( ) - . and an optional +.'
		),
	currency: z.enum(['usd'], { error: 'Only US dollars are supported for now.' }),
	distanceUnit: z.enum(['km', 'mi'], { error: 'Choose kilometres or miles.' }),
	storyReviewRequired: z.preprocess((v) => v === 'on', z.boolean())
});

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const s = await getOrganisationSettings();
	return {
		settings: {
			displayName: s.displayName,
			legalName: s.legalName,
			taxId: s.taxId,
			postalAddress: s.postalAddress,
			hotlineName: s.hotlineName,
			hotlineNumber: s.hotlineNumber,
			currency: s.currency,
			distanceUnit: s.distanceUnit,
			storyReviewRequired: s.storyReviewRequired
		}
	};
};

export const actions: Actions = {
	default: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(settingsForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		await db().transaction(async (tx) => {
			await updateOrganisationSettings(tx, parsed.data, actor.id);
			await audit(tx, actor.id, 'settings.updated', 'organisation', {
				fields: Object.keys(parsed.data)
			});
		});
		return { saved: 'Settings saved.' };
	}
};
