import { asc, desc, eq, inArray } from 'drizzle-orm';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { patients, stories, users } from '$lib/server/db/schema';
import { pendingFarewells } from '$lib/server/updates/farewells';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	// Only what the patient table shows; each patient's page loads the rest.
	const [rows, waiting, farewells] = await Promise.all([
		db()
			.select({
				id: patients.id,
				name: patients.name,
				species: patients.species,
				status: patients.status,
				publicTreatment: patients.publicTreatment,
				admittedOn: patients.admittedOn
			})
			.from(patients)
			.orderBy(asc(patients.name)),
		// stories that need someone: in review, or scheduled to go out
		db()
			.select({
				id: stories.id,
				title: stories.title,
				status: stories.status,
				publishAt: stories.publishAt,
				author: users.name
			})
			.from(stories)
			.leftJoin(users, eq(users.id, stories.authorId))
			.where(inArray(stories.status, ['in_review', 'scheduled']))
			.orderBy(desc(stories.updatedAt))
			.limit(20),
		pendingFarewells()
	]);
	return { patients: rows, waiting, farewells: farewells.length };
};
