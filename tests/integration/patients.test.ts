import { eq } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import { patients } from '$lib/server/db/schema';
import { getPublicPatient, listPublicPatients } from '$lib/server/patients';
import { useTestDatabase } from '../setup/test-db';

const db = useTestDatabase();

const STAFF_FIELDS = {
	strandingLatitude: '17.951234',
	strandingLongitude: '-66.612345',
	strandingPlace: 'Test cove beside the pier',
	strandedOn: '2026-03-01',
	flipperTags: ['TWD-9001', 'TWD-9002'],
	microchip: '999000000900101',
	transmitterId: 'TWD-SAT-9001',
	medicalNotes: 'Test notes that must stay with staff.',
	agencyCaseNumber: 'ARV-26-9001'
};

function patient(
	slug: string,
	values: Partial<typeof patients.$inferInsert> = {}
): typeof patients.$inferInsert {
	return {
		id: `id-${slug}`,
		slug,
		name: slug[0].toUpperCase() + slug.slice(1),
		species: 'green',
		lifeStage: 'juvenile',
		carapaceLengthCm: '40.5',
		weightKg: '8.25',
		admittedOn: '2026-03-02',
		admissionReason: 'entanglement',
		status: 'in_rehabilitation',
		summary: 'A test patient.',
		...STAFF_FIELDS,
		...values
	};
}

beforeAll(async () => {
	await db()
		.insert(patients)
		.values([
			patient('arena'),
			patient('hidden-one', { publicTreatment: 'hidden' }),
			patient('salida', { status: 'released', admittedOn: '2026-01-10' }),
			patient('recuerdo', {
				status: 'died',
				publicTreatment: 'memorial',
				memorialNote: 'Remembered.',
				admittedOn: '2026-03-20'
			}),
			patient('nueva', { status: 'admitted', admittedOn: '2026-03-15' })
		]);
});

describe('getPublicPatient', () => {
	it('returns the public fields of a patient and none of its staff fields', async () => {
		const found = await getPublicPatient('arena', db());
		expect(found).not.toBeNull();
		expect(found).toMatchObject({ slug: 'arena', name: 'Arena', carapaceLengthCm: '40.5' });
		for (const key of Object.keys(STAFF_FIELDS)) expect(found).not.toHaveProperty(key);
		const text = JSON.stringify(found);
		for (const value of Object.values(STAFF_FIELDS).flat()) expect(text).not.toContain(value);
	});

	it('returns null for a hidden patient and for an unknown slug', async () => {
		expect(await getPublicPatient('hidden-one', db())).toBeNull();
		expect(await getPublicPatient('nobody', db())).toBeNull();
	});

	it('returns a memorial with its note', async () => {
		const found = await getPublicPatient('recuerdo', db());
		expect(found).toMatchObject({ publicTreatment: 'memorial', memorialNote: 'Remembered.' });
	});
});

describe('listPublicPatients', () => {
	it('leaves out hidden patients and lists those in care first, then released, then memorials', async () => {
		const list = await listPublicPatients({}, db());
		expect(list.map((p) => p.slug)).toEqual(['nueva', 'arena', 'salida', 'recuerdo']);
		for (const row of list) {
			for (const key of Object.keys(STAFF_FIELDS)) expect(row).not.toHaveProperty(key);
		}
	});

	it('can list only the patients in care, up to a limit', async () => {
		const list = await listPublicPatients({ inCareOnly: true, limit: 1 }, db());
		expect(list.map((p) => p.slug)).toEqual(['nueva']);
	});

	it('still reads the staff fields from the table itself', async () => {
		const [row] = await db().select().from(patients).where(eq(patients.slug, 'arena'));
		expect(row.microchip).toBe(STAFF_FIELDS.microchip);
	});
});
