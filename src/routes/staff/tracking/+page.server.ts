import { requireRoles } from '$lib/server/auth/roles';
import { deskOverview } from '$lib/server/journeys/desk';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.tracking.roles);
	return { patients: await deskOverview() };
};
