import type { patients, releases } from './db/schema';

// The one list of columns that must never reach a public page, API, feed, sitemap, share image or
// e-mail. Public code selects explicit public columns; tests import these lists to prove it.

/** Stranding site and day, identification marks, transmitter, medical notes, agency case. */
export const STAFF_ONLY_PATIENT_COLUMNS = [
	'strandingLatitude',
	'strandingLongitude',
	'strandingPlace',
	'strandedOn',
	'flipperTags',
	'microchip',
	'transmitterId',
	'medicalNotes',
	'agencyCaseNumber'
] as const satisfies readonly (keyof typeof patients.$inferSelect)[];

/** The exact release site and the paperwork behind it; the public sees `publicArea` only. */
export const STAFF_ONLY_RELEASE_COLUMNS = [
	'siteLatitude',
	'siteLongitude',
	'siteNotes',
	'authorisationRef',
	'vetClearedBy',
	'vetClearedOn'
] as const satisfies readonly (keyof typeof releases.$inferSelect)[];

export type StaffOnlyPatientColumn = (typeof STAFF_ONLY_PATIENT_COLUMNS)[number];
export type StaffOnlyReleaseColumn = (typeof STAFF_ONLY_RELEASE_COLUMNS)[number];
