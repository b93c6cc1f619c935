// One schema per form of the patient page.
import { z } from 'zod';
import { PATIENT_STATUSES, PUBLIC_TREATMENTS, RELEASE_HABITATS } from '$lib/server/db/schema';
import {
	checkAnyDay,
	checkLatitude,
	checkLongitude,
	checkPastDay,
	checkPublicArea,
	TEXT_LIMITS,
	type ReleaseInput
} from '$lib/server/newsroom/patient-rules';
import {
	checkbox,
	day,
	optionalDay,
	optionalNumber,
	optionalText
} from '$lib/server/newsroom/form-fields';

const mediaId = z.string({ error: 'Upload a photo first.' }).trim().min(1, 'Upload a photo first.');

export const statusForm = z
	.object({
		to: z.enum(PATIENT_STATUSES, { error: 'Choose the new status.' }),
		note: optionalText(TEXT_LIMITS.statusNote, 'the note'),
		confirmFinal: checkbox
	})
	.superRefine((form, ctx) => {
		if (form.to === 'died' && !form.confirmFinal) {
			ctx.addIssue({
				code: 'custom',
				path: ['confirmFinal'],
				message: 'Tick the box to confirm: this status cannot be changed afterwards.'
			});
		}
	});

export const treatmentForm = z.object({
	publicTreatment: z.enum(PUBLIC_TREATMENTS, { error: 'Choose how the public sees this patient.' }),
	memorialNote: optionalText(TEXT_LIMITS.memorialNote, 'the memorial note')
});

export const heroForm = z.object({
	mediaId,
	heroAlt: optionalText(TEXT_LIMITS.alt, 'the description')
});

export const addPhotoForm = z.object({
	mediaId,
	caption: optionalText(TEXT_LIMITS.caption, 'the caption')
});

export const captionForm = addPhotoForm;

export const photoForm = z.object({ mediaId });

export const movePhotoForm = z.object({
	mediaId,
	direction: z.enum(['up', 'down'], { error: 'Choose up or down.' })
});

export const releaseForm = z.object({
	releaseId: optionalText(100, 'the release'),
	releaseOn: day('Enter the release date (planned or actual).', (d) =>
		checkAnyDay(d, 'The release date')
	),
	publicArea: z
		.string({ error: 'Enter the public area.' })
		.superRefine((value, ctx) => {
			const message = checkPublicArea(value);
			if (message) ctx.addIssue({ code: 'custom', message });
		})
		.transform((value) => value.trim()),
	habitat: z.enum(RELEASE_HABITATS, { error: 'Choose the habitat.' }),
	siteLatitude: optionalNumber(
		'Enter the latitude in decimal degrees, like 17.9102.',
		checkLatitude
	),
	siteLongitude: optionalNumber(
		'Enter the longitude in decimal degrees, like -66.2507.',
		checkLongitude
	),
	siteNotes: optionalText(TEXT_LIMITS.siteNotes, 'the site notes'),
	authorisationRef: optionalText(TEXT_LIMITS.authorisationRef, 'the reference'),
	vetClearedBy: optionalText(TEXT_LIMITS.vetClearedBy, 'the name'),
	vetClearedOn: optionalDay((d) => checkPastDay(d, new Date(), 'The clearance date')),
	transmitterAttached: checkbox
}) satisfies z.ZodType<ReleaseInput & { releaseId: string | null }, unknown>;

export const releaseRefForm = z.object({
	releaseId: z.string({ error: 'Choose a release.' }).trim().min(1, 'Choose a release.')
});
