import {
	and,
	asc,
	desc,
	eq,
	ilike,
	inArray,
	isNotNull,
	ne,
	sql,
	type Column,
	type SQL,
	type Table
} from 'drizzle-orm';
import { IN_CARE_STATUSES } from '$lib/patients';
import { db, type Executor } from './db';
import {
	media,
	patientPhotos,
	patients,
	releases,
	type PatientStatus,
	type Species
} from './db/schema';
import {
	DEFAULT_MEDIA_WIDTH,
	MEDIA_WIDTHS,
	mediaSrcset,
	mediaUrl,
	mediaWidthsFor,
	nearestWidth
} from '$lib/media';

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

/** What the public may know of a release: the day and the coarse area, never the site. */
export const publicReleaseColumns = {
	releaseOn: releases.releaseOn,
	publicArea: releases.publicArea
};
export type PublicRelease = Pick<typeof releases.$inferSelect, keyof typeof publicReleaseColumns>;

export interface PublicPhoto {
	src: string;
	srcset: string | null;
	alt: string;
}

/** A card on the patients page: the card columns, the day of the completed release, the photo. */
export type PatientListItem = Omit<PublicPatientCard, 'heroImage' | 'heroAlt'> & {
	releasedOn: string | null;
	photo: PublicPhoto | null;
};

/**
 * "table"."column" for correlated subqueries: in a query on one table Drizzle writes bare column
 * names, which inside a subquery would bind to the subquery's own table.
 */
export function qualified(table: Table, column: Column): SQL {
	return sql`${table}.${sql.identifier(column.name)}`;
}

const patientId = qualified(patients, patients.id);

// The most recent completed release; a planned one is not news yet.
const releasedOnSql = sql<string | null>`(
	select max(r.release_on) from ${releases} r
	where r.patient_id = ${patientId} and r.done_at is not null
)`;

const firstPhotoSql = sql<string | null>`(
	select pp.media_id from ${patientPhotos} pp
	where pp.patient_id = ${patientId}
	order by pp.position, pp.media_id limit 1
)`;

const firstPhotoAltSql = sql<string | null>`(
	select m.alt from ${patientPhotos} pp join ${media} m on m.id = pp.media_id
	where pp.patient_id = ${patientId}
	order by pp.position, pp.media_id limit 1
)`;

/**
 * A media-store image as src + srcset. With the original width known, the srcset names only the
 * sizes that were stored; without it, every web size (the store serves the nearest one).
 */
export function mediaPhoto(mediaId: string, alt: string, originalWidth?: number): PublicPhoto {
	const widths = originalWidth ? mediaWidthsFor(originalWidth) : [...MEDIA_WIDTHS];
	return {
		src: mediaUrl(mediaId, nearestWidth(widths, DEFAULT_MEDIA_WIDTH)),
		srcset: mediaSrcset(mediaId, widths),
		alt
	};
}

/** The hero chosen by staff, or else the first photo of the gallery. */
function cardPhoto(row: {
	heroImage: string | null;
	heroAlt: string | null;
	firstPhoto: string | null;
	firstPhotoAlt: string | null;
}): PublicPhoto | null {
	if (row.heroImage) return { src: row.heroImage, srcset: null, alt: row.heroAlt ?? '' };
	if (row.firstPhoto) return mediaPhoto(row.firstPhoto, row.firstPhotoAlt ?? '');
	return null;
}

/** Case-insensitive "contains" pattern; %, _ and \ in the search are taken literally. */
export function containsPattern(text: string): string {
	return `%${text.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

export interface ListPublicPatientsOptions {
	/** Only animals still at the hospital (the home page's "in our care now"). */
	inCareOnly?: boolean;
	species?: Species;
	status?: PatientStatus;
	/** Part of the name, already trimmed. */
	q?: string;
	limit?: number;
}

/**
 * Patients the public may see, as cards: those still in care first, then released ones, then
 * memorials; newest admissions first within each group.
 */
export async function listPublicPatients(
	options: ListPublicPatientsOptions = {},
	executor: Executor = db()
): Promise<PatientListItem[]> {
	const query = executor
		.select({
			...publicPatientCardColumns,
			releasedOn: releasedOnSql,
			firstPhoto: firstPhotoSql,
			firstPhotoAlt: firstPhotoAltSql
		})
		.from(patients)
		.where(
			and(
				ne(patients.publicTreatment, 'hidden'),
				options.inCareOnly ? inArray(patients.status, [...IN_CARE_STATUSES]) : undefined,
				options.species ? eq(patients.species, options.species) : undefined,
				options.status ? eq(patients.status, options.status) : undefined,
				options.q ? ilike(patients.name, containsPattern(options.q)) : undefined
			)
		)
		.orderBy(careOrder, desc(patients.admittedOn), asc(patients.name));
	const rows = await (options.limit === undefined ? query : query.limit(options.limit));
	return rows.map(({ heroImage, heroAlt, firstPhoto, firstPhotoAlt, ...card }) => ({
		...card,
		photo: cardPhoto({ heroImage, heroAlt, firstPhoto, firstPhotoAlt })
	}));
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

/** The completed release of a patient (the latest, should there be several), public part only. */
export async function getPublicRelease(
	patientId: string,
	executor: Executor = db()
): Promise<PublicRelease | null> {
	const [row] = await executor
		.select(publicReleaseColumns)
		.from(releases)
		.where(and(eq(releases.patientId, patientId), isNotNull(releases.doneAt)))
		.orderBy(desc(releases.releaseOn))
		.limit(1);
	return row ?? null;
}

export interface GalleryPhoto extends PublicPhoto {
	width: number;
	height: number;
	caption: string | null;
}

/** A patient's photos in the order staff chose (for the public page and the Newsroom). */
export async function galleryRows(patientId: string, executor: Executor = db()) {
	return executor
		.select({
			mediaId: patientPhotos.mediaId,
			caption: patientPhotos.caption,
			alt: media.alt,
			width: media.width,
			height: media.height
		})
		.from(patientPhotos)
		.innerJoin(media, eq(media.id, patientPhotos.mediaId))
		.where(eq(patientPhotos.patientId, patientId))
		.orderBy(asc(patientPhotos.position), asc(patientPhotos.mediaId));
}

/** A patient's gallery in the order staff chose. */
export async function listPatientPhotos(
	patientId: string,
	executor: Executor = db()
): Promise<GalleryPhoto[]> {
	const rows = await galleryRows(patientId, executor);
	return rows.map((row) => ({
		...mediaPhoto(row.mediaId, row.alt || row.caption || '', row.width),
		width: row.width,
		height: row.height,
		caption: row.caption
	}));
}

/** Everything a public profile shows, shaped for the page and the JSON API alike. */
export interface PublicProfile {
	slug: string;
	name: string;
	species: Species;
	lifeStage: PublicPatient['lifeStage'];
	carapaceLengthCm: string | null;
	weightKg: string | null;
	admittedOn: string;
	admissionReason: PublicPatient['admissionReason'];
	status: PatientStatus;
	summary: string;
	heroImage: string | null;
	heroAlt: string | null;
	memorial: boolean;
	memorialNote: string | null;
	/** Present once the release is done: the day and the coarse public area. */
	release: PublicRelease | null;
	photos: GalleryPhoto[];
}

/** A public profile, or null when the slug is unknown or staff have hidden the patient. */
export async function getPublicProfile(
	slug: string,
	executor: Executor = db()
): Promise<PublicProfile | null> {
	const patient = await getPublicPatient(slug, executor);
	if (!patient) return null;
	const [release, photos] = await Promise.all([
		getPublicRelease(patient.id, executor),
		listPatientPhotos(patient.id, executor)
	]);
	const memorial = patient.publicTreatment === 'memorial';
	return {
		slug: patient.slug,
		name: patient.name,
		species: patient.species,
		lifeStage: patient.lifeStage,
		carapaceLengthCm: patient.carapaceLengthCm,
		weightKg: patient.weightKg,
		admittedOn: patient.admittedOn,
		admissionReason: patient.admissionReason,
		status: patient.status,
		summary: patient.summary,
		heroImage: patient.heroImage,
		heroAlt: patient.heroAlt,
		memorial,
		memorialNote: memorial ? patient.memorialNote : null,
		release: patient.status === 'released' ? release : null,
		photos
	};
}
