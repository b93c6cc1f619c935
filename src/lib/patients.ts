// Words and formats for patients, shared by server and browser. Type-only imports keep the
// schema module (server-only) out of the browser bundle while the Records below still fail to
// compile when the schema gains a value that has no label here.
import type { AdmissionReason, LifeStage, PatientStatus, Species } from '$lib/server/db/schema';
import { formatDecimal, formatLongDateUtc } from './format';

export interface SpeciesLabel {
	common: string;
	scientific: string;
}

export const SPECIES_LABELS: Record<Species, SpeciesLabel> = {
	loggerhead: { common: 'Loggerhead', scientific: 'Caretta caretta' },
	green: { common: 'Green turtle', scientific: 'Chelonia mydas' },
	kemps_ridley: { common: "Kemp's ridley", scientific: 'Lepidochelys kempii' },
	hawksbill: { common: 'Hawksbill', scientific: 'Eretmochelys imbricata' },
	leatherback: { common: 'Leatherback', scientific: 'Dermochelys coriacea' },
	olive_ridley: { common: 'Olive ridley', scientific: 'Lepidochelys olivacea' },
	flatback: { common: 'Flatback', scientific: 'Natator depressus' }
};

/** The common name inside a sentence: lower case, except for a name taken from a person. */
export function speciesInText(species: Species): string {
	const common = SPECIES_LABELS[species].common;
	return species === 'kemps_ridley' ? common : common.toLowerCase();
}

export const LIFE_STAGE_LABELS: Record<LifeStage, string> = {
	post_hatchling: 'Post-hatchling',
	juvenile: 'Juvenile',
	subadult: 'Subadult',
	adult: 'Adult'
};

export const ADMISSION_REASON_LABELS: Record<AdmissionReason, string> = {
	boat_strike: 'Boat strike',
	entanglement: 'Entanglement',
	fishing_hook_or_line: 'Fishing hook or line',
	cold_stunning: 'Cold-stunning',
	fibropapillomatosis: 'Fibropapillomatosis (tumour disease)',
	debris_ingestion: 'Swallowed debris',
	other: 'Other'
};

export const STATUS_LABELS: Record<PatientStatus, string> = {
	admitted: 'Just admitted',
	in_rehabilitation: 'In rehabilitation',
	ready_for_release: 'Ready for release',
	released: 'Released',
	permanent_resident: 'Permanent resident',
	died: 'Died in our care'
};

/** Statuses of animals still at the hospital. */
export const IN_CARE_STATUSES: readonly PatientStatus[] = [
	'admitted',
	'in_rehabilitation',
	'ready_for_release',
	'permanent_resident'
];

export function isInCare(status: PatientStatus): boolean {
	return IN_CARE_STATUSES.includes(status);
}

/** Tailwind classes for a status badge; colour is never the only cue, the label is always shown. */
export const STATUS_BADGE_CLASSES: Record<PatientStatus, string> = {
	admitted: 'bg-coral-100 text-coral-800',
	in_rehabilitation: 'bg-deep-100 text-deep-800',
	ready_for_release: 'bg-lagoon-100 text-lagoon-800',
	released: 'bg-lagoon-700 text-white',
	permanent_resident: 'bg-sand-200 text-sand-900',
	died: 'bg-ink-700 text-white'
};

// Dates are stored as plain calendar days ('YYYY-MM-DD'); formatting them in UTC keeps a day from
// shifting to the day before for readers west of Greenwich. No Intl here: see $lib/format.
export function formatDay(day: string): string {
	const date = new Date(`${day}T00:00:00Z`);
	return Number.isNaN(date.getTime()) ? day : formatLongDateUtc(date);
}

/** Straight carapace length; numeric columns arrive as strings. */
export function formatLengthCm(cm: string | null): string | null {
	if (cm === null) return null;
	const value = Number(cm);
	return Number.isFinite(value) ? `${formatDecimal(value, 1)} cm` : null;
}

/** Weight, in grams below one kilogram (post-hatchlings weigh a few dozen grams). */
export function formatWeightKg(kg: string | null): string | null {
	if (kg === null) return null;
	const value = Number(kg);
	if (!Number.isFinite(value)) return null;
	if (value < 1) return `${Math.round(value * 1000)} g`;
	return `${formatDecimal(value, 1)} kg`;
}
