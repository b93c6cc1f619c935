import { getTableColumns } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { patients } from './db/schema';
import { publicPatientCardColumns, publicPatientColumns } from './patients';

const STAFF_ONLY = [
	'strandingLatitude',
	'strandingLongitude',
	'strandingPlace',
	'strandedOn',
	'flipperTags',
	'microchip',
	'transmitterId',
	'medicalNotes',
	'agencyCaseNumber'
] as const;

const all = getTableColumns(patients);
const staffColumns = STAFF_ONLY.map((key) => all[key]);

describe.each([
	['publicPatientColumns', publicPatientColumns],
	['publicPatientCardColumns', publicPatientCardColumns]
])('%s', (_name, columns) => {
	it('has no staff-only key', () => {
		for (const key of STAFF_ONLY) expect(Object.keys(columns)).not.toContain(key);
	});

	it('selects no staff-only column, whatever key it is under', () => {
		for (const column of Object.values(columns)) expect(staffColumns).not.toContain(column);
	});

	it('selects only columns of the patients table', () => {
		for (const column of Object.values(columns)) expect(Object.values(all)).toContain(column);
	});
});
