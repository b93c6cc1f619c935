import { requireRoles, STAFF_ROLES } from '$lib/server/auth/roles';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	const user = requireRoles(event, ...STAFF_ROLES);
	return { name: user.name };
};
