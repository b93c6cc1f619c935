// What an adoption certificate says, read for the signed-in supporter who may download it.
import { and, asc, eq } from 'drizzle-orm';
import { nearestWidth, DEFAULT_MEDIA_WIDTH } from '$lib/media';
import { SPECIES_LABELS, speciesInText } from '$lib/patients';
import { db } from '../db';
import { adoptionLevels, adoptions, mediaVariants, patientPhotos, patients } from '../db/schema';
import { publicPatientColumns } from '../patients';
import { getOrganisationSettings } from '../settings';
import { accountAdoptions } from './account';
import type { CertificateData } from './certificate';

export type AdoptionCertificate = CertificateData & { patientSlug: string };

/** A cancelled adoption still earns its certificate when a payment was made and kept. */
const KEPT_PAYMENTS = new Set(['paid', 'partially_refunded']);

const MEDIA_URL = /^\/media\/([A-Za-z0-9_-]{1,64})\/\d+\.(?:webp|jpeg)$/;

/**
 * The certificate of one of the account's adoptions, or null when the account page does not list
 * it for this user (same ownership rules), or when it was cancelled without a kept payment.
 * Patient facts come from the public columns only.
 */
export async function certificateFor(
	adoptionId: string,
	userId: string
): Promise<AdoptionCertificate | null> {
	const listed = (await accountAdoptions(userId)).find((a) => a.id === adoptionId);
	if (!listed) return null;
	if (listed.status === 'cancelled' && !listed.payments.some((p) => KEPT_PAYMENTS.has(p.status))) {
		return null;
	}
	const [row] = await db()
		.select({
			kind: adoptions.kind,
			supporterName: adoptions.supporterName,
			recipientName: adoptions.recipientName,
			teacherName: adoptions.teacherName,
			schoolName: adoptions.schoolName,
			startedAt: adoptions.startedAt,
			createdAt: adoptions.createdAt,
			levelName: adoptionLevels.name,
			patientId: publicPatientColumns.id,
			patientSlug: publicPatientColumns.slug,
			patientName: publicPatientColumns.name,
			species: publicPatientColumns.species,
			status: publicPatientColumns.status,
			heroImage: publicPatientColumns.heroImage
		})
		.from(adoptions)
		.innerJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.where(eq(adoptions.id, adoptionId));
	if (!row) return null;

	const [settings, photoJpeg] = await Promise.all([
		getOrganisationSettings(),
		patientPhotoJpeg(row.patientId, row.heroImage)
	]);
	return {
		patientSlug: row.patientSlug,
		patientName: row.patientName,
		speciesCommon: speciesInText(row.species),
		speciesScientific: SPECIES_LABELS[row.species].scientific,
		adoptedBy: adoptedBy(row),
		levelName: row.levelName,
		startedOn: (row.startedAt ?? row.createdAt).toISOString().slice(0, 10),
		organisation: settings.displayName,
		photoJpeg,
		remembered: row.status === 'died'
	};
}

/** Whose name the certificate carries: the recipient of a gift, a class, or the supporter. */
export function adoptedBy(row: {
	kind: 'self' | 'gift' | 'classroom';
	supporterName: string;
	recipientName: string | null;
	teacherName: string | null;
	schoolName: string | null;
}): string {
	const present = (value: string | null) => (value?.trim() ? value.trim() : null);
	if (row.kind === 'gift') return present(row.recipientName) ?? row.supporterName;
	if (row.kind === 'classroom') {
		const teacher = present(row.teacherName);
		const school = present(row.schoolName);
		if (teacher && school) return `${teacher}’s class at ${school}`;
		if (school) return `A class at ${school}`;
		if (teacher) return `${teacher}’s class`;
	}
	return row.supporterName;
}

/**
 * The patient's photo as JPEG bytes (pdf-lib embeds JPEG and PNG, not WebP): the hero image when
 * it is a stored photo, else the first of the gallery; the 960 px variant, else the nearest one.
 */
async function patientPhotoJpeg(
	patientId: string,
	heroImage: string | null
): Promise<Uint8Array | null> {
	let mediaId = heroImage ? (MEDIA_URL.exec(heroImage)?.[1] ?? null) : null;
	if (!mediaId) {
		const [first] = await db()
			.select({ mediaId: patientPhotos.mediaId })
			.from(patientPhotos)
			.where(eq(patientPhotos.patientId, patientId))
			.orderBy(asc(patientPhotos.position), asc(patientPhotos.mediaId))
			.limit(1);
		mediaId = first?.mediaId ?? null;
	}
	if (!mediaId) return null;
	const jpeg = and(eq(mediaVariants.mediaId, mediaId), eq(mediaVariants.format, 'jpeg'));
	const stored = await db().select({ width: mediaVariants.width }).from(mediaVariants).where(jpeg);
	if (stored.length === 0) return null;
	const width = nearestWidth(
		stored.map((v) => v.width),
		DEFAULT_MEDIA_WIDTH
	);
	const [variant] = await db()
		.select({ bytes: mediaVariants.bytes })
		.from(mediaVariants)
		.where(and(jpeg, eq(mediaVariants.width, width)));
	return variant ? new Uint8Array(variant.bytes) : null;
}
