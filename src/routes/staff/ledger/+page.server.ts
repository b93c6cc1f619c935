import { requireRoles } from '$lib/server/auth/roles';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	return {};
};
