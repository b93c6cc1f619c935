import { error, fail } from '@sveltejs/kit';
import { and, desc, eq } from 'drizzle-orm';
import { alias } from 'drizzle-orm/pg-core';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { patients, patientStatusLog, releases, users } from '$lib/server/db/schema';
import { parseForm } from '$lib/server/forms';
import {
	allowedStatusTargets,
	checkReleaseCompletion,
	habitatHint,
	NewsroomRefusal
} from '$lib/server/newsroom/patient-rules';
import {
	addGalleryPhoto,
	listGallery,
	moveGalleryPhoto,
	removeGalleryPhoto,
	removeHeroPhoto,
	setGalleryCaption,
	setHeroPhoto
} from '$lib/server/newsroom/patient-photos';
import { changeStatus, setPublicTreatment, updatePatient } from '$lib/server/newsroom/patients';
import {
	cancelRelease,
	completeRelease,
	PLANNABLE_STATUSES,
	planRelease,
	updateRelease,
	type ReleaseRow
} from '$lib/server/newsroom/releases';
import { STATUS_LABELS } from '$lib/patients';
import { STAFF_AREAS } from '$lib/staff-areas';
import { patientForm, patientFormValues } from '../patient-form';
import {
	addPhotoForm,
	captionForm,
	heroForm,
	movePhotoForm,
	photoForm,
	releaseForm,
	releaseRefForm,
	statusForm,
	treatmentForm
} from './forms';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.newsroom.roles;

function releaseFormValues(r: ReleaseRow): Record<string, string> {
	return {
		releaseId: r.id,
		releaseOn: r.releaseOn,
		publicArea: r.publicArea,
		habitat: r.habitat,
		siteLatitude: r.siteLatitude ?? '',
		siteLongitude: r.siteLongitude ?? '',
		siteNotes: r.siteNotes ?? '',
		authorisationRef: r.authorisationRef ?? '',
		vetClearedBy: r.vetClearedBy ?? '',
		vetClearedOn: r.vetClearedOn ?? '',
		transmitterAttached: r.transmitterAttached ? 'on' : ''
	};
}

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const [patient] = await db().select().from(patients).where(eq(patients.id, event.params.id));
	if (!patient) error(404, 'No patient here.');
	const changer = alias(users, 'changer');
	const [log, gallery, releaseRows] = await Promise.all([
		db()
			.select({
				id: patientStatusLog.id,
				fromStatus: patientStatusLog.fromStatus,
				toStatus: patientStatusLog.toStatus,
				note: patientStatusLog.note,
				changedAt: patientStatusLog.changedAt,
				changedBy: changer.name
			})
			.from(patientStatusLog)
			.leftJoin(changer, eq(changer.id, patientStatusLog.changedBy))
			.where(eq(patientStatusLog.patientId, patient.id))
			.orderBy(desc(patientStatusLog.changedAt), desc(patientStatusLog.id)),
		listGallery(patient.id),
		db()
			.select({ release: releases, doneByName: users.name })
			.from(releases)
			.leftJoin(users, eq(users.id, releases.doneBy))
			.where(eq(releases.patientId, patient.id))
			.orderBy(desc(releases.createdAt))
	]);
	const open = releaseRows.find((r) => r.release.doneAt === null)?.release ?? null;
	return {
		patient: {
			id: patient.id,
			slug: patient.slug,
			name: patient.name,
			status: patient.status,
			lifeStage: patient.lifeStage,
			publicTreatment: patient.publicTreatment,
			memorialNote: patient.memorialNote,
			heroImage: patient.heroImage,
			heroAlt: patient.heroAlt
		},
		profile: patientFormValues(patient),
		statusTargets: allowedStatusTargets(patient.status),
		log,
		gallery,
		openRelease: open
			? {
					id: open.id,
					values: releaseFormValues(open),
					problem: checkReleaseCompletion(open, patient.status, new Date())
				}
			: null,
		doneReleases: releaseRows
			.filter((r) => r.release.doneAt !== null)
			.map(({ release: r, doneByName }) => ({
				id: r.id,
				releaseOn: r.releaseOn,
				publicArea: r.publicArea,
				habitat: r.habitat,
				authorisationRef: r.authorisationRef,
				vetClearedBy: r.vetClearedBy,
				vetClearedOn: r.vetClearedOn,
				transmitterAttached: r.transmitterAttached,
				doneAt: r.doneAt!,
				doneBy: doneByName
			})),
		canPlanRelease: !open && PLANNABLE_STATUSES.includes(patient.status),
		habitatHint: habitatHint(patient.lifeStage),
		created: event.url.searchParams.has('created')
	};
};

/** A refusal by the rules becomes a 400 for the form that asked; anything else is a bug. */
function refused(form: string, err: unknown, values?: Record<string, string>) {
	if (err instanceof NewsroomRefusal) {
		return fail(400, { form, message: err.message, errors: err.errors, values });
	}
	throw err;
}

async function releaseBelongs(releaseId: string, patientId: string): Promise<boolean> {
	const [row] = await db()
		.select({ id: releases.id })
		.from(releases)
		.where(and(eq(releases.id, releaseId), eq(releases.patientId, patientId)));
	return row !== undefined;
}

const NO_RELEASE = 'That release record is not this patient’s; reload the page.';

export const actions: Actions = {
	profile: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(patientForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, {
				form: 'profile',
				message: 'Some fields need attention; see the messages beside them.',
				errors: parsed.errors,
				values: parsed.values
			});
		}
		try {
			await updatePatient(event.params.id, parsed.data, actor);
		} catch (err) {
			return refused('profile', err, parsed.values);
		}
		return { form: 'profile', done: 'Profile saved.' };
	},

	status: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(statusForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'status', errors: parsed.errors, values: parsed.values });
		}
		const { to, note } = parsed.data;
		try {
			await db().transaction((tx) => changeStatus(tx, event.params.id, to, actor, note));
		} catch (err) {
			return refused('status', err, parsed.values);
		}
		return { form: 'status', done: `Status changed to “${STATUS_LABELS[to]}”.` };
	},

	treatment: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(treatmentForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'treatment', errors: parsed.errors, values: parsed.values });
		}
		try {
			const { publicTreatment, memorialNote } = parsed.data;
			await setPublicTreatment(event.params.id, publicTreatment, memorialNote, actor);
		} catch (err) {
			return refused('treatment', err, parsed.values);
		}
		return { form: 'treatment', done: 'Public page updated.' };
	},

	hero: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(heroForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'hero', errors: parsed.errors, values: parsed.values });
		}
		try {
			await setHeroPhoto(event.params.id, parsed.data.mediaId, parsed.data.heroAlt, actor);
		} catch (err) {
			return refused('hero', err, parsed.values);
		}
		return { form: 'hero', done: 'Hero photo set.' };
	},

	removeHero: async (event) => {
		const actor = requireRoles(event, ...area);
		try {
			await removeHeroPhoto(event.params.id, actor);
		} catch (err) {
			return refused('hero', err);
		}
		return { form: 'hero', done: 'Hero photo removed.' };
	},

	addPhoto: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(addPhotoForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'gallery', errors: parsed.errors, values: parsed.values });
		}
		try {
			await addGalleryPhoto(event.params.id, parsed.data.mediaId, parsed.data.caption, actor);
		} catch (err) {
			return refused('gallery', err, parsed.values);
		}
		return { form: 'gallery', done: 'Photo added to the gallery.' };
	},

	caption: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(captionForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, {
				form: 'gallery',
				message: Object.values(parsed.errors)[0],
				values: parsed.values
			});
		}
		try {
			await setGalleryCaption(event.params.id, parsed.data.mediaId, parsed.data.caption, actor);
		} catch (err) {
			return refused('gallery', err, parsed.values);
		}
		return { form: 'gallery', done: 'Caption saved.' };
	},

	removePhoto: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(photoForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { form: 'gallery', message: 'Choose a photo.' });
		await removeGalleryPhoto(event.params.id, parsed.data.mediaId, actor);
		return { form: 'gallery', done: 'Photo removed from the gallery.' };
	},

	movePhoto: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(movePhotoForm, await event.request.formData());
		if (!parsed.ok)
			return fail(400, { form: 'gallery', message: 'Choose a photo and a direction.' });
		const { mediaId, direction } = parsed.data;
		try {
			await moveGalleryPhoto(event.params.id, mediaId, direction, actor);
		} catch (err) {
			return refused('gallery', err);
		}
		return { form: 'gallery', done: `Photo moved ${direction}.` };
	},

	release: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(releaseForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'release', errors: parsed.errors, values: parsed.values });
		}
		const { releaseId, ...input } = parsed.data;
		try {
			if (releaseId) {
				if (!(await releaseBelongs(releaseId, event.params.id))) {
					return fail(400, { form: 'release', message: NO_RELEASE, values: parsed.values });
				}
				await updateRelease(releaseId, input, actor);
			} else {
				await planRelease(event.params.id, input, actor);
			}
		} catch (err) {
			return refused('release', err, parsed.values);
		}
		return { form: 'release', done: releaseId ? 'Release plan saved.' : 'Release planned.' };
	},

	cancelRelease: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(releaseRefForm, await event.request.formData());
		if (!parsed.ok || !(await releaseBelongs(parsed.data.releaseId, event.params.id))) {
			return fail(400, { form: 'release', message: NO_RELEASE });
		}
		try {
			await cancelRelease(parsed.data.releaseId, actor);
		} catch (err) {
			return refused('release', err);
		}
		return { form: 'release', done: 'Release plan cancelled.' };
	},

	completeRelease: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(releaseRefForm, await event.request.formData());
		if (!parsed.ok || !(await releaseBelongs(parsed.data.releaseId, event.params.id))) {
			return fail(400, { form: 'release', message: NO_RELEASE });
		}
		try {
			const result = await completeRelease(parsed.data.releaseId, actor);
			if (result.outcome === 'already_done') {
				return { form: 'release', done: 'This release was already marked done; nothing changed.' };
			}
		} catch (err) {
			return refused('release', err);
		}
		return { form: 'release', done: 'Release marked done; the patient is now “Released”.' };
	}
};
