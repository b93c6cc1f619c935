import { asc } from 'drizzle-orm';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { patients } from '$lib/server/db/schema';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	// Only what the patient table shows; each patient's page loads the rest.
	const rows = await db()
		.select({
			id: patients.id,
			name: patients.name,
			species: patients.species,
			status: patients.status,
			publicTreatment: patients.publicTreatment,
			admittedOn: patients.admittedOn
		})
		.from(patients)
		.orderBy(asc(patients.name));
	return { patients: rows };
};
