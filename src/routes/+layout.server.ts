import { getOrganisationSettings } from '$lib/server/settings';
import type { LayoutServerLoad } from './$types';

export const load: LayoutServerLoad = async ({ locals }) => {
	const settings = await getOrganisationSettings();
	return {
		user: locals.user
			? { name: locals.user.name, email: locals.user.email, roles: locals.user.roles }
			: null,
		organisation: {
			displayName: settings.displayName,
			hotlineNumber: settings.hotlineNumber,
			hotlineName: settings.hotlineName,
			postalAddress: settings.postalAddress
		}
	};
};
