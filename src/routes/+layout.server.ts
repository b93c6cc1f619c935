import { publicRead } from '$lib/server/public-cache';
import { getOrganisationSettings } from '$lib/server/settings';
import { areasFor } from '$lib/staff-areas';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const settings = await publicRead('settings', () => getOrganisationSettings());
	return {
		user: locals.user
			? {
					name: locals.user.name,
					email: locals.user.email,
					roles: locals.user.roles,
					// Decided here, so that the list of staff areas stays out of every page's script.
					staff: areasFor(locals.user.roles).length > 0
				}
			: null,
		organisation: {
			displayName: settings.displayName,
			hotlineNumber: settings.hotlineNumber,
			hotlineName: settings.hotlineName,
			postalAddress: settings.postalAddress
		}
	};
};
