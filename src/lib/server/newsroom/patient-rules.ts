// The rules of the patient and release workflow, with no I/O: the services and the forms share
// them, and the unit tests beside this file pin every one of them down.
import {
	ADMISSION_REASONS,
	LIFE_STAGES,
	PATIENT_STATUSES,
	PUBLIC_TREATMENTS,
	RELEASE_HABITATS,
	SPECIES,
	type AdmissionReason,
	type LifeStage,
	type PatientStatus,
	type ReleaseHabitat,
	type Species
} from '../db/schema';
import { STATUS_LABELS } from '../../patients';
import { slugify } from '../../slug';

export type FieldErrors = Record<string, string>;
export type PublicTreatment = (typeof PUBLIC_TREATMENTS)[number];

/** A change staff asked for that the rules refuse; `message` is written for them. */
export class NewsroomRefusal extends Error {
	constructor(
		message: string,
		readonly errors: FieldErrors = {}
	) {
		super(message);
		this.name = 'NewsroomRefusal';
	}
}

// ---------------------------------------------------------------------------------------------
// Status
// ---------------------------------------------------------------------------------------------

/**
 * Where a plain status edit may take a patient. `released` is missing everywhere on purpose: a
 * patient is released only by completing a release record, which carries the agency's
 * authorisation and the vet's clearance. `died` has no way out.
 */
export const STATUS_TRANSITIONS: Record<PatientStatus, readonly PatientStatus[]> = {
	admitted: ['in_rehabilitation', 'ready_for_release', 'permanent_resident', 'died'],
	in_rehabilitation: ['ready_for_release', 'permanent_resident', 'died'],
	// A setback sends a patient back to rehabilitation.
	ready_for_release: ['in_rehabilitation', 'permanent_resident', 'died'],
	// A released turtle that strands again is re-admitted.
	released: ['admitted'],
	// A resident reassessed as able to live in the wild goes back into rehabilitation first.
	permanent_resident: ['in_rehabilitation', 'died'],
	died: []
};

/** The only status from which a completed release may set a patient to released. */
export const RELEASABLE_STATUS: PatientStatus = 'ready_for_release';

export function allowedStatusTargets(from: PatientStatus): readonly PatientStatus[] {
	return STATUS_TRANSITIONS[from];
}

function label(status: PatientStatus): string {
	return STATUS_LABELS[status];
}

/**
 * Why a patient may not go from `from` to `to`, or null when it may. `via` says who asks: a staff
 * member editing the status, or the completion of a release record.
 */
export function checkStatusChange(
	from: PatientStatus,
	to: PatientStatus,
	via: 'edit' | 'release' = 'edit'
): string | null {
	if (!PATIENT_STATUSES.includes(to)) return 'Choose one of the listed statuses.';
	if (from === to) return `The patient is already “${label(to)}”.`;
	if (from === 'died') {
		return 'This patient died in our care; that status is final and cannot be changed.';
	}
	if (to === 'released') {
		if (via === 'edit') {
			return 'A patient becomes “Released” only when the release is marked done in the Release section, where the wildlife agency’s authorisation and the veterinary clearance are recorded.';
		}
		if (from !== RELEASABLE_STATUS) {
			return `Set the status to “${label(RELEASABLE_STATUS)}” before marking the release done; the patient is “${label(from)}”.`;
		}
		return null;
	}
	if (via === 'release') return 'A release can only set a patient to “Released”.';
	const targets = STATUS_TRANSITIONS[from];
	if (targets.includes(to)) return null;
	const choices = targets.map((s) => `“${label(s)}”`).join(', ');
	return `A patient cannot go from “${label(from)}” to “${label(to)}”. From “${label(from)}” the choices are ${choices}.`;
}

// ---------------------------------------------------------------------------------------------
// Values
// ---------------------------------------------------------------------------------------------

export const CARAPACE_CM = { min: 3, max: 250 } as const;
export const WEIGHT_KG = { min: 0.01, max: 1000 } as const;
export const EARLIEST_DAY = '1900-01-01';

export function checkCarapaceLength(cm: number): string | null {
	if (!Number.isFinite(cm)) return 'Enter the straight carapace length in centimetres.';
	if (cm < CARAPACE_CM.min || cm > CARAPACE_CM.max) {
		return `Enter a length between ${CARAPACE_CM.min} and ${CARAPACE_CM.max} cm.`;
	}
	return null;
}

export function checkWeight(kg: number): string | null {
	if (!Number.isFinite(kg)) return 'Enter the weight in kilograms.';
	if (kg < WEIGHT_KG.min || kg > WEIGHT_KG.max) {
		return `Enter a weight between ${WEIGHT_KG.min} and ${WEIGHT_KG.max} kg (a 40 g post-hatchling is 0.04).`;
	}
	return null;
}

export function checkLatitude(lat: number): string | null {
	return Number.isFinite(lat) && lat >= -90 && lat <= 90
		? null
		: 'Enter a latitude between −90 and 90 (decimal degrees, south is negative).';
}

export function checkLongitude(lon: number): string | null {
	return Number.isFinite(lon) && lon >= -180 && lon <= 180
		? null
		: 'Enter a longitude between −180 and 180 (decimal degrees, west is negative).';
}

export function isCalendarDay(value: string): boolean {
	if (!/^\d{4}-\d{2}-\d{2}$/.test(value)) return false;
	const date = new Date(`${value}T00:00:00Z`);
	return !Number.isNaN(date.getTime()) && date.toISOString().slice(0, 10) === value;
}

/**
 * The latest calendar day that is not in the future anywhere on Earth: today at UTC+14. The
 * hospital's own time zone is not stored, and this never refuses a day that has begun where
 * staff are, at the cost of letting a day through a few hours early west of there.
 */
export function latestPastDay(now: Date): string {
	return new Date(now.getTime() + 14 * 3_600_000).toISOString().slice(0, 10);
}

/** A calendar day that has already begun; `what` names it in the message ("The admission date"). */
export function checkPastDay(day: string, now: Date, what: string): string | null {
	if (!isCalendarDay(day)) return `${what}: enter a date like 2026-03-14.`;
	if (day < EARLIEST_DAY) return `${what} cannot be before ${EARLIEST_DAY}.`;
	if (day > latestPastDay(now)) return `${what} cannot be in the future.`;
	return null;
}

export function checkAnyDay(day: string, what: string): string | null {
	if (!isCalendarDay(day)) return `${what}: enter a date like 2026-03-14.`;
	if (day < EARLIEST_DAY) return `${what} cannot be before ${EARLIEST_DAY}.`;
	return null;
}

/**
 * The slug a patient's public page starts from. A name with no Latin letters or digits (a name
 * in another script, an emoji) gets a plain word rather than an empty or generic segment.
 */
export function patientSlugBase(name: string): string {
	const slug = slugify(name);
	return slug === 'item' && !/\bitem\b/i.test(name) ? 'turtle' : slug;
}

// ---------------------------------------------------------------------------------------------
// Patient profile
// ---------------------------------------------------------------------------------------------

export interface PatientInput {
	name: string;
	species: Species;
	lifeStage: LifeStage;
	carapaceLengthCm: number | null;
	weightKg: number | null;
	admittedOn: string;
	admissionReason: AdmissionReason;
	summary: string;
	// staff only
	strandedOn: string | null;
	strandingPlace: string | null;
	strandingLatitude: number | null;
	strandingLongitude: number | null;
	flipperTags: string[];
	microchip: string | null;
	transmitterId: string | null;
	medicalNotes: string | null;
	agencyCaseNumber: string | null;
}

export const TEXT_LIMITS = {
	name: 120,
	summary: 2000,
	strandingPlace: 200,
	flipperTag: 40,
	flipperTags: 10,
	microchip: 40,
	transmitterId: 40,
	medicalNotes: 10_000,
	agencyCaseNumber: 60,
	memorialNote: 2000,
	publicArea: 80,
	siteNotes: 2000,
	authorisationRef: 80,
	vetClearedBy: 120,
	caption: 300,
	alt: 300,
	statusNote: 1000
} as const;

function tooLong(value: string | null, max: number, what: string): string | null {
	return value !== null && value.length > max ? `Keep ${what} under ${max} characters.` : null;
}

/** Checks a pair of coordinates: both or neither, each within range. Adds to `errors`. */
function checkCoordinates(
	lat: number | null,
	lon: number | null,
	latKey: string,
	lonKey: string,
	errors: FieldErrors
): void {
	if (lat === null && lon === null) return;
	if (lat === null) errors[latKey] = 'Enter the latitude too, or clear the longitude.';
	else {
		const m = checkLatitude(lat);
		if (m) errors[latKey] = m;
	}
	if (lon === null) errors[lonKey] = 'Enter the longitude too, or clear the latitude.';
	else {
		const m = checkLongitude(lon);
		if (m) errors[lonKey] = m;
	}
}

function set(errors: FieldErrors, key: string, message: string | null): void {
	if (message && !errors[key]) errors[key] = message;
}

/** Every problem with a patient profile, by field; empty when it may be saved. */
export function validatePatientInput(input: PatientInput, now: Date): FieldErrors {
	const errors: FieldErrors = {};
	const name = input.name.trim();
	set(errors, 'name', name ? null : 'Enter the name staff gave the turtle.');
	set(errors, 'name', tooLong(name, TEXT_LIMITS.name, 'the name'));
	set(errors, 'species', SPECIES.includes(input.species) ? null : 'Choose the species.');
	set(errors, 'lifeStage', LIFE_STAGES.includes(input.lifeStage) ? null : 'Choose the life stage.');
	set(
		errors,
		'admissionReason',
		ADMISSION_REASONS.includes(input.admissionReason) ? null : 'Choose the reason for admission.'
	);
	if (input.carapaceLengthCm !== null) {
		set(errors, 'carapaceLengthCm', checkCarapaceLength(input.carapaceLengthCm));
	}
	if (input.weightKg !== null) set(errors, 'weightKg', checkWeight(input.weightKg));
	set(errors, 'admittedOn', checkPastDay(input.admittedOn, now, 'The admission date'));
	set(errors, 'summary', tooLong(input.summary, TEXT_LIMITS.summary, 'the summary'));

	if (input.strandedOn !== null) {
		set(errors, 'strandedOn', checkPastDay(input.strandedOn, now, 'The stranding date'));
		if (!errors.strandedOn && !errors.admittedOn && input.strandedOn > input.admittedOn) {
			errors.strandedOn = 'The stranding date cannot be after the admission date.';
		}
	}
	checkCoordinates(
		input.strandingLatitude,
		input.strandingLongitude,
		'strandingLatitude',
		'strandingLongitude',
		errors
	);
	set(
		errors,
		'strandingPlace',
		tooLong(input.strandingPlace, TEXT_LIMITS.strandingPlace, 'the place')
	);
	if (input.flipperTags.length > TEXT_LIMITS.flipperTags) {
		set(errors, 'flipperTags', `Enter at most ${TEXT_LIMITS.flipperTags} flipper tags.`);
	}
	for (const tag of input.flipperTags) {
		if (!tag.trim()) set(errors, 'flipperTags', 'Remove the empty flipper tag.');
		set(errors, 'flipperTags', tooLong(tag, TEXT_LIMITS.flipperTag, 'each flipper tag'));
	}
	if (new Set(input.flipperTags).size !== input.flipperTags.length) {
		set(errors, 'flipperTags', 'Each flipper tag number should appear once.');
	}
	set(errors, 'microchip', tooLong(input.microchip, TEXT_LIMITS.microchip, 'the microchip number'));
	set(
		errors,
		'transmitterId',
		tooLong(input.transmitterId, TEXT_LIMITS.transmitterId, 'the transmitter ID')
	);
	set(
		errors,
		'medicalNotes',
		tooLong(input.medicalNotes, TEXT_LIMITS.medicalNotes, 'the medical notes')
	);
	set(
		errors,
		'agencyCaseNumber',
		tooLong(input.agencyCaseNumber, TEXT_LIMITS.agencyCaseNumber, 'the case number')
	);
	return errors;
}

/**
 * Problems with how the public sees a patient. Hiding is open to any patient (a new admission
 * may stay hidden until the vet has seen it). A memorial is only for a turtle that died: the
 * public page shows it under "In memory", which must never be said of a living resident.
 */
export function checkPublicTreatment(
	status: PatientStatus,
	treatment: string,
	memorialNote: string | null
): FieldErrors {
	if (!PUBLIC_TREATMENTS.includes(treatment as PublicTreatment)) {
		return { publicTreatment: 'Choose how the public sees this patient.' };
	}
	if (treatment === 'memorial') {
		if (status !== 'died') {
			return {
				publicTreatment:
					'A memorial is only for a turtle that died in our care. For a permanent resident, tell its story in the public summary.'
			};
		}
		if (!memorialNote?.trim()) {
			return { memorialNote: 'Write the memorial note the public will read.' };
		}
	}
	const long = tooLong(memorialNote, TEXT_LIMITS.memorialNote, 'the memorial note');
	return long ? { memorialNote: long } : {};
}

// ---------------------------------------------------------------------------------------------
// Releases
// ---------------------------------------------------------------------------------------------

export interface ReleaseInput {
	releaseOn: string;
	publicArea: string;
	habitat: ReleaseHabitat;
	// staff only
	siteLatitude: number | null;
	siteLongitude: number | null;
	siteNotes: string | null;
	authorisationRef: string | null;
	vetClearedBy: string | null;
	vetClearedOn: string | null;
	transmitterAttached: boolean;
}

// Digits with decimals, degree or minute signs: what a pasted position looks like.
const LOOKS_LIKE_POSITION = /\d+[.,]\d{2,}|\d\s*[°º′'"]|\b\d{1,3}\s*[NSEW]\b/i;

/** The public area must be a coarse place name: it is the only part of the site the public sees. */
export function checkPublicArea(area: string): string | null {
	const value = area.trim();
	if (!value) return 'Enter the public area, a coarse name such as “off the south coast”.';
	if (value.length > TEXT_LIMITS.publicArea) {
		return `Keep the public area under ${TEXT_LIMITS.publicArea} characters.`;
	}
	if (LOOKS_LIKE_POSITION.test(value)) {
		return 'The public area looks like a position. Use a coarse name instead; the exact site belongs in the staff-only fields.';
	}
	return null;
}

/** Every problem with a release record, by field; empty when it may be saved. */
export function validateReleaseInput(input: ReleaseInput, now: Date): FieldErrors {
	const errors: FieldErrors = {};
	set(errors, 'releaseOn', checkAnyDay(input.releaseOn, 'The release date'));
	set(errors, 'publicArea', checkPublicArea(input.publicArea));
	set(errors, 'habitat', RELEASE_HABITATS.includes(input.habitat) ? null : 'Choose the habitat.');
	checkCoordinates(
		input.siteLatitude,
		input.siteLongitude,
		'siteLatitude',
		'siteLongitude',
		errors
	);
	set(errors, 'siteNotes', tooLong(input.siteNotes, TEXT_LIMITS.siteNotes, 'the site notes'));
	set(
		errors,
		'authorisationRef',
		tooLong(input.authorisationRef, TEXT_LIMITS.authorisationRef, 'the reference')
	);
	set(errors, 'vetClearedBy', tooLong(input.vetClearedBy, TEXT_LIMITS.vetClearedBy, 'the name'));
	if ((input.vetClearedBy === null) !== (input.vetClearedOn === null)) {
		const missing = input.vetClearedBy === null ? 'vetClearedBy' : 'vetClearedOn';
		set(
			errors,
			missing,
			missing === 'vetClearedBy'
				? 'Enter who gave the veterinary clearance, or clear the date.'
				: 'Enter the day of the veterinary clearance, or clear the name.'
		);
	}
	if (input.vetClearedOn !== null) {
		set(errors, 'vetClearedOn', checkPastDay(input.vetClearedOn, now, 'The clearance date'));
	}
	return errors;
}

export interface ReleaseReadiness {
	releaseOn: string;
	authorisationRef: string | null;
	vetClearedBy: string | null;
	vetClearedOn: string | null;
}

/**
 * Why a release may not be marked done yet, as one message naming everything missing, or null.
 * The agency's authorisation and the vet's clearance are the two records the law and our own
 * practice ask for; the status check makes sure someone judged the turtle ready first.
 */
export function checkReleaseCompletion(
	release: ReleaseReadiness,
	patientStatus: PatientStatus,
	now: Date
): string | null {
	const missing: string[] = [];
	if (!release.authorisationRef?.trim()) {
		missing.push('the wildlife agency’s authorisation reference');
	}
	if (!release.vetClearedBy?.trim() || !release.vetClearedOn) {
		missing.push('the veterinary clearance (who cleared the turtle, and when)');
	}
	const problems: string[] = [];
	if (missing.length) problems.push(`Record ${missing.join(' and ')}.`);
	if (release.releaseOn > latestPastDay(now)) {
		problems.push(
			'The release date is still in the future; set it to the day the turtle went back to the sea.'
		);
	}
	const status = checkStatusChange(patientStatus, 'released', 'release');
	if (status) problems.push(status);
	return problems.length ? `The release cannot be marked done yet. ${problems.join(' ')}` : null;
}

export interface HabitatHint {
	suggested: readonly ReleaseHabitat[];
	text: string;
}

/** Common practice for where a turtle of this life stage is released; staff decide. */
export function habitatHint(lifeStage: LifeStage): HabitatHint {
	const defer =
		'The veterinarian and the wildlife agency decide for each turtle; follow their advice where it differs.';
	switch (lifeStage) {
		case 'post_hatchling':
			return {
				suggested: ['offshore_weed_line'],
				text: `Common practice: post-hatchlings go offshore to a floating weed line, where they shelter and feed. ${defer}`
			};
		case 'juvenile':
			return {
				suggested: ['offshore_weed_line', 'seagrass_bed', 'other'],
				text: `Common practice: small juveniles that have not yet settled near the coast go to an offshore weed line; larger juveniles to seagrass beds or reefs (choose “Other” for a reef). ${defer}`
			};
		case 'subadult':
			return {
				suggested: ['seagrass_bed', 'other'],
				text: `Common practice: subadults go to seagrass beds or reefs near where they feed (choose “Other” for a reef). ${defer}`
			};
		case 'adult':
			return {
				suggested: ['beach', 'other'],
				text: `Common practice: adults are released from a beach or nearshore (choose “Other” for nearshore by boat). ${defer}`
			};
	}
}
