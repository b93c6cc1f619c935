import { requireRoles, STAFF_ROLES } from '$lib/server/auth/roles';
import { areasFor } from '$lib/staff-areas';
import type { LayoutServerLoad } from './$types';

// Every page below checks its own roles too: a layout load does not guard form actions.
export const load: LayoutServerLoad = (event) => {
	const user = requireRoles(event, ...STAFF_ROLES);
	return { areas: areasFor(user.roles).map(({ href, label }) => ({ href, label })) };
};
