// The patient profile form (new patient and edit), shared by both routes beside it.
import { z } from 'zod';
import { ADMISSION_REASONS, LIFE_STAGES, SPECIES } from '$lib/server/db/schema';
import {
	checkCarapaceLength,
	checkLatitude,
	checkLongitude,
	checkPastDay,
	checkWeight,
	TEXT_LIMITS,
	type PatientInput
} from '$lib/server/newsroom/patient-rules';
import {
	day,
	list,
	optionalDay,
	optionalNumber,
	optionalText,
	requiredText
} from '$lib/server/newsroom/form-fields';
import type { PatientRow } from '$lib/server/newsroom/patients';

export const patientForm = z.object({
	name: requiredText(TEXT_LIMITS.name, 'Enter the name staff gave the turtle.', 'the name'),
	species: z.enum(SPECIES, { error: 'Choose the species.' }),
	lifeStage: z.enum(LIFE_STAGES, { error: 'Choose the life stage.' }),
	carapaceLengthCm: optionalNumber(
		'Enter the length in centimetres, like 46.2.',
		checkCarapaceLength
	),
	weightKg: optionalNumber('Enter the weight in kilograms, like 12.4.', checkWeight),
	admittedOn: day('Enter the admission date.', (d) =>
		checkPastDay(d, new Date(), 'The admission date')
	),
	admissionReason: z.enum(ADMISSION_REASONS, { error: 'Choose the reason for admission.' }),
	summary: z
		.string()
		.optional()
		.transform((s) => (s ?? '').trim())
		.pipe(
			z
				.string()
				.max(TEXT_LIMITS.summary, `Keep the summary under ${TEXT_LIMITS.summary} characters.`)
		),
	strandedOn: optionalDay((d) => checkPastDay(d, new Date(), 'The stranding date')),
	strandingPlace: optionalText(TEXT_LIMITS.strandingPlace, 'the place'),
	strandingLatitude: optionalNumber(
		'Enter the latitude in decimal degrees, like 17.9651.',
		checkLatitude
	),
	strandingLongitude: optionalNumber(
		'Enter the longitude in decimal degrees, like -66.2215.',
		checkLongitude
	),
	flipperTags: list(TEXT_LIMITS.flipperTag, 'flipper tag'),
	microchip: optionalText(TEXT_LIMITS.microchip, 'the microchip number'),
	transmitterId: optionalText(TEXT_LIMITS.transmitterId, 'the transmitter ID'),
	medicalNotes: optionalText(TEXT_LIMITS.medicalNotes, 'the medical notes'),
	agencyCaseNumber: optionalText(TEXT_LIMITS.agencyCaseNumber, 'the case number')
}) satisfies z.ZodType<PatientInput, unknown>;

/** A stored patient as the strings the form shows. */
export function patientFormValues(row: PatientRow): Record<string, string> {
	return {
		name: row.name,
		species: row.species,
		lifeStage: row.lifeStage,
		carapaceLengthCm: row.carapaceLengthCm ?? '',
		weightKg: row.weightKg ?? '',
		admittedOn: row.admittedOn,
		admissionReason: row.admissionReason,
		summary: row.summary,
		strandedOn: row.strandedOn ?? '',
		strandingPlace: row.strandingPlace ?? '',
		strandingLatitude: row.strandingLatitude ?? '',
		strandingLongitude: row.strandingLongitude ?? '',
		flipperTags: row.flipperTags.join(', '),
		microchip: row.microchip ?? '',
		transmitterId: row.transmitterId ?? '',
		medicalNotes: row.medicalNotes ?? '',
		agencyCaseNumber: row.agencyCaseNumber ?? ''
	};
}
