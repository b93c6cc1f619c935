import { getTableColumns } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { patients, releases } from './db/schema';
import { publicPatientCardColumns, publicPatientColumns, publicReleaseColumns } from './patients';
import { STAFF_ONLY_PATIENT_COLUMNS, STAFF_ONLY_RELEASE_COLUMNS } from './staff-only';

const STAFF_ONLY = STAFF_ONLY_PATIENT_COLUMNS;

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

describe('publicReleaseColumns', () => {
	const releaseColumns = getTableColumns(releases);
	it('selects no part of the exact site or the paperwork', () => {
		const staff = STAFF_ONLY_RELEASE_COLUMNS.map((key) => releaseColumns[key]);
		for (const key of STAFF_ONLY_RELEASE_COLUMNS) {
			expect(Object.keys(publicReleaseColumns)).not.toContain(key);
		}
		for (const column of Object.values(publicReleaseColumns)) {
			expect(staff).not.toContain(column);
			expect(Object.values(releaseColumns)).toContain(column);
		}
	});
});
