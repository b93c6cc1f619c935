// A patient's hero photo and gallery. The images themselves are stored and cleaned by the media
// module (EXIF/GPS stripped on upload); here we only point at them.
import { galleryRows } from '../patients';
import { and, asc, eq, max } from 'drizzle-orm';
import { audit } from '../audit';
import { db, type Executor } from '../db';
import { media, patientPhotos, patients } from '../db/schema';
import { mediaUrl } from '../media';
import { NewsroomRefusal, TEXT_LIMITS } from './patient-rules';
import type { Actor } from './patients';

async function requirePatient(tx: Executor, patientId: string): Promise<void> {
	const [row] = await tx
		.select({ id: patients.id })
		.from(patients)
		.where(eq(patients.id, patientId))
		.for('update');
	if (!row) throw new NewsroomRefusal('That patient no longer exists.');
}

async function requireMedia(tx: Executor, mediaId: string): Promise<{ alt: string }> {
	const [row] = await tx.select({ alt: media.alt }).from(media).where(eq(media.id, mediaId));
	if (!row) throw new NewsroomRefusal('That image was not found; upload it again.');
	return row;
}

function cleanText(value: string | null | undefined, max: number, what: string): string | null {
	const text = value?.trim() || null;
	if (text && text.length > max) throw new NewsroomRefusal(`Keep ${what} under ${max} characters.`);
	return text;
}

/**
 * Makes an uploaded image the patient's hero photo. The description for screen readers is the one
 * given here, or else the one given at upload; one of them is needed.
 */
export async function setHeroPhoto(
	patientId: string,
	mediaId: string,
	alt: string | null,
	actor: Actor
): Promise<void> {
	const given = cleanText(alt, TEXT_LIMITS.alt, 'the description');
	await db().transaction(async (tx) => {
		await requirePatient(tx, patientId);
		const image = await requireMedia(tx, mediaId);
		const description = given ?? (image.alt.trim() || null);
		if (!description) {
			const message = 'Describe the photo for people who cannot see it.';
			throw new NewsroomRefusal(message, { heroAlt: message });
		}
		await tx
			.update(patients)
			.set({ heroImage: mediaUrl(mediaId), heroAlt: description, updatedAt: new Date() })
			.where(eq(patients.id, patientId));
		await audit(tx, actor.id, 'patient.hero_set', patientId, { mediaId });
	});
}

export async function removeHeroPhoto(patientId: string, actor: Actor): Promise<void> {
	await db().transaction(async (tx) => {
		await requirePatient(tx, patientId);
		await tx
			.update(patients)
			.set({ heroImage: null, heroAlt: null, updatedAt: new Date() })
			.where(eq(patients.id, patientId));
		await audit(tx, actor.id, 'patient.hero_removed', patientId);
	});
}

/** Adds an uploaded image at the end of the gallery. */
export async function addGalleryPhoto(
	patientId: string,
	mediaId: string,
	caption: string | null,
	actor: Actor
): Promise<void> {
	const text = cleanText(caption, TEXT_LIMITS.caption, 'the caption');
	await db().transaction(async (tx) => {
		await requirePatient(tx, patientId);
		await requireMedia(tx, mediaId);
		const [{ last }] = await tx
			.select({ last: max(patientPhotos.position) })
			.from(patientPhotos)
			.where(eq(patientPhotos.patientId, patientId));
		const inserted = await tx
			.insert(patientPhotos)
			.values({ patientId, mediaId, caption: text, position: (last ?? -1) + 1 })
			.onConflictDoNothing()
			.returning({ mediaId: patientPhotos.mediaId });
		if (inserted.length === 0) throw new NewsroomRefusal('That photo is already in the gallery.');
		await audit(tx, actor.id, 'patient.photo_added', patientId, { mediaId });
	});
}

export async function setGalleryCaption(
	patientId: string,
	mediaId: string,
	caption: string | null,
	actor: Actor
): Promise<void> {
	const text = cleanText(caption, TEXT_LIMITS.caption, 'the caption');
	await db().transaction(async (tx) => {
		const updated = await tx
			.update(patientPhotos)
			.set({ caption: text })
			.where(and(eq(patientPhotos.patientId, patientId), eq(patientPhotos.mediaId, mediaId)))
			.returning({ mediaId: patientPhotos.mediaId });
		if (updated.length === 0) throw new NewsroomRefusal('That photo is no longer in the gallery.');
		await audit(tx, actor.id, 'patient.photo_captioned', patientId, { mediaId });
	});
}

/** Takes a photo out of the gallery; the image stays in the media library (stories may use it). */
export async function removeGalleryPhoto(
	patientId: string,
	mediaId: string,
	actor: Actor
): Promise<void> {
	await db().transaction(async (tx) => {
		const removed = await tx
			.delete(patientPhotos)
			.where(and(eq(patientPhotos.patientId, patientId), eq(patientPhotos.mediaId, mediaId)))
			.returning({ mediaId: patientPhotos.mediaId });
		if (removed.length === 0) return;
		await audit(tx, actor.id, 'patient.photo_removed', patientId, { mediaId });
	});
}

/** Swaps a photo with its neighbour; positions are renumbered 0, 1, 2… on the way. */
export async function moveGalleryPhoto(
	patientId: string,
	mediaId: string,
	direction: 'up' | 'down',
	actor: Actor
): Promise<void> {
	await db().transaction(async (tx) => {
		await requirePatient(tx, patientId);
		const order = (
			await tx
				.select({ mediaId: patientPhotos.mediaId })
				.from(patientPhotos)
				.where(eq(patientPhotos.patientId, patientId))
				.orderBy(asc(patientPhotos.position), asc(patientPhotos.mediaId))
		).map((r) => r.mediaId);
		const from = order.indexOf(mediaId);
		if (from === -1) throw new NewsroomRefusal('That photo is no longer in the gallery.');
		const to = direction === 'up' ? from - 1 : from + 1;
		if (to < 0 || to >= order.length) return;
		[order[from], order[to]] = [order[to], order[from]];
		for (const [position, id] of order.entries()) {
			await tx
				.update(patientPhotos)
				.set({ position })
				.where(and(eq(patientPhotos.patientId, patientId), eq(patientPhotos.mediaId, id)));
		}
		await audit(tx, actor.id, 'patient.photo_moved', patientId, { mediaId, direction });
	});
}

export interface GalleryPhoto {
	mediaId: string;
	caption: string | null;
	alt: string;
	width: number;
	height: number;
	url: string;
}

export async function listGallery(
	patientId: string,
	executor: Executor = db()
): Promise<GalleryPhoto[]> {
	const rows = await galleryRows(patientId, executor);
	return rows.map((r) => ({ ...r, url: mediaUrl(r.mediaId) }));
}
