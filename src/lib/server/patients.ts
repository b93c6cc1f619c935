import { and, asc, desc, eq, inArray, ne, sql } from 'drizzle-orm';
import { IN_CARE_STATUSES } from '$lib/patients';
import { db, type Executor } from './db';
import { patients } from './db/schema';

/**
 * Every column the public may see. Public pages, feeds and APIs select through this object (or a
 * subset of it) and never the whole row: the stranding site, tags, chip, transmitter, medical
 * notes and agency case number stay with staff. A unit test guards the list.
 */
export const publicPatientColumns = {
	id: patients.id,
	slug: patients.slug,
	name: patients.name,
	species: patients.species,
	lifeStage: patients.lifeStage,
	carapaceLengthCm: patients.carapaceLengthCm,
	weightKg: patients.weightKg,
	admittedOn: patients.admittedOn,
	admissionReason: patients.admissionReason,
	status: patients.status,
	publicTreatment: patients.publicTreatment,
	memorialNote: patients.memorialNote,
	summary: patients.summary,
	heroImage: patients.heroImage,
	heroAlt: patients.heroAlt
};

/** What a patient card shows: a subset of the public columns. */
export const publicPatientCardColumns = {
	slug: publicPatientColumns.slug,
	name: publicPatientColumns.name,
	species: publicPatientColumns.species,
	status: publicPatientColumns.status,
	publicTreatment: publicPatientColumns.publicTreatment,
	admittedOn: publicPatientColumns.admittedOn,
	summary: publicPatientColumns.summary,
	heroImage: publicPatientColumns.heroImage,
	heroAlt: publicPatientColumns.heroAlt
};

export type PublicPatient = Pick<typeof patients.$inferSelect, keyof typeof publicPatientColumns>;
export type PublicPatientCard = Pick<PublicPatient, keyof typeof publicPatientCardColumns>;

const careOrder = sql`case
	when ${inArray(patients.status, [...IN_CARE_STATUSES])} then 0
	when ${patients.status} = 'released' then 1
	else 2 end`;

export interface ListPublicPatientsOptions {
	/** Only animals still at the hospital (the home page's "in our care now"). */
	inCareOnly?: boolean;
	limit?: number;
}

/**
 * Patients the public may see, as cards: those still in care first, then released ones, then
 * memorials; newest admissions first within each group.
 */
export async function listPublicPatients(
	options: ListPublicPatientsOptions = {},
	executor: Executor = db()
): Promise<PublicPatientCard[]> {
	const query = executor
		.select(publicPatientCardColumns)
		.from(patients)
		.where(
			and(
				ne(patients.publicTreatment, 'hidden'),
				options.inCareOnly ? inArray(patients.status, [...IN_CARE_STATUSES]) : undefined
			)
		)
		.orderBy(careOrder, desc(patients.admittedOn), asc(patients.name));
	return options.limit === undefined ? query : query.limit(options.limit);
}

/** One public profile, or null when the slug is unknown or staff have hidden the patient. */
export async function getPublicPatient(
	slug: string,
	executor: Executor = db()
): Promise<PublicPatient | null> {
	const [row] = await executor
		.select(publicPatientColumns)
		.from(patients)
		.where(and(eq(patients.slug, slug), ne(patients.publicTreatment, 'hidden')));
	return row ?? null;
}
