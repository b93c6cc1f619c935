import { asc } from 'drizzle-orm';
import { db } from '../db';
import { patients } from '../db/schema';

/** The patients a story can be linked to, for the editor's checkboxes. */
export async function patientChoices() {
	return db()
		.select({ id: patients.id, name: patients.name, status: patients.status })
		.from(patients)
		.orderBy(asc(patients.name));
}
