import { asc } from 'drizzle-orm';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { patients } from '$lib/server/db/schema';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.tracking.roles);
	const rows = await db()
		.select({
			slug: patients.slug,
			name: patients.name,
			status: patients.status,
			transmitterId: patients.transmitterId,
			flipperTags: patients.flipperTags
		})
		.from(patients)
		.orderBy(asc(patients.name));
	return { patients: rows };
};
