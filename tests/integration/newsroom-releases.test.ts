import { isActionFailure } from '@sveltejs/kit';
import { asc, eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	auditLog,
	patientEvents,
	patients,
	patientStatusLog,
	releases
} from '$lib/server/db/schema';
import type { PatientInput } from '$lib/server/newsroom/patient-rules';
import { changeStatus, createPatient, setPublicTreatment } from '$lib/server/newsroom/patients';
import { completeRelease, planRelease } from '$lib/server/newsroom/releases';
import { actions } from '../../src/routes/staff/newsroom/patients/[id]/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { daysAgo, fakeEvent, people, rows } from './newsroom-helpers';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);

const SITE = {
	lat: '17.912345',
	lon: '-66.254321',
	notes: 'Launch from the north side of the reef gap'
};

function patientInput(name: string): PatientInput {
	return {
		name,
		species: 'green',
		lifeStage: 'subadult',
		carapaceLengthCm: 62,
		weightKg: 30,
		admittedOn: daysAgo(120),
		admissionReason: 'boat_strike',
		summary: '',
		strandedOn: null,
		strandingPlace: null,
		strandingLatitude: null,
		strandingLongitude: null,
		flipperTags: [],
		microchip: null,
		transmitterId: null,
		medicalNotes: null,
		agencyCaseNumber: null
	};
}

/** A patient judged ready for release, through the same status steps staff take. */
async function readyPatient(name: string, actor: SessionUser): Promise<string> {
	const { id } = await createPatient(patientInput(name), actor);
	await db().transaction((tx) => changeStatus(tx, id, 'in_rehabilitation', actor));
	await db().transaction((tx) => changeStatus(tx, id, 'ready_for_release', actor));
	return id;
}

function releaseForm(over: Record<string, string> = {}) {
	return {
		releaseOn: daysAgo(1),
		publicArea: 'off the south coast',
		habitat: 'seagrass_bed',
		siteLatitude: SITE.lat,
		siteLongitude: SITE.lon,
		siteNotes: SITE.notes,
		authorisationRef: 'AGENCY-REL-2026-17',
		vetClearedBy: 'Dr. Example Vet',
		vetClearedOn: daysAgo(2),
		transmitterAttached: 'on',
		...over
	};
}

async function plan(patientId: string, actor: SessionUser, over: Record<string, string> = {}) {
	const result = await actions.release(
		fakeEvent(`/staff/newsroom/patients/${patientId}`, actor, releaseForm(over), {
			id: patientId
		})
	);
	expect(result).toEqual({ form: 'release', done: 'Release planned.' });
	const [row] = await db().select().from(releases).where(eq(releases.patientId, patientId));
	return row.id;
}

function complete(patientId: string, releaseId: string, actor: SessionUser) {
	return actions.completeRelease(
		fakeEvent(`/staff/newsroom/patients/${patientId}`, actor, { releaseId }, { id: patientId })
	);
}

async function snapshot() {
	return {
		patients: await db().select().from(patients).orderBy(asc(patients.id)),
		releases: await db().select().from(releases).orderBy(asc(releases.id)),
		log: await rows(db, patientStatusLog),
		events: await db().select().from(patientEvents).orderBy(asc(patientEvents.id)),
		audit: await rows(db, auditLog)
	};
}

function refusal(result: unknown): string {
	expect(isActionFailure(result)).toBe(true);
	if (!isActionFailure(result)) throw new Error('expected a failure');
	expect(result.status).toBe(400);
	return (result.data as unknown as { message: string }).message;
}

describe('planning a release', () => {
	it('refuses bad input with field messages and stores nothing', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Plan', educator);
		const before = await snapshot();
		const result = await actions.release(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				releaseForm({
					publicArea: '17.9123 N, 66.2543 W',
					habitat: 'lagoon',
					siteLatitude: '-95',
					vetClearedOn: daysAgo(-5)
				}),
				{ id }
			)
		);
		expect(isActionFailure(result) && result.data).toMatchObject({
			errors: {
				publicArea: expect.stringMatching(/looks like a position/),
				habitat: 'Choose the habitat.',
				siteLatitude: expect.stringMatching(/between −90 and 90/),
				vetClearedOn: 'The clearance date cannot be in the future.'
			}
		});
		expect(await snapshot()).toEqual(before);
	});

	it('keeps one open plan per patient', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Once', educator);
		await plan(id, educator);
		await expect(
			planRelease(
				id,
				{
					releaseOn: daysAgo(0),
					publicArea: 'off the east coast',
					habitat: 'beach',
					siteLatitude: null,
					siteLongitude: null,
					siteNotes: null,
					authorisationRef: null,
					vetClearedBy: null,
					vetClearedOn: null,
					transmitterAttached: false
				},
				educator
			)
		).rejects.toThrow(/already has a planned release/);
	});
});

describe('marking a release done', () => {
	it('is refused without the authorisation reference, naming it, and changes nothing', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Sin Permiso', educator);
		const releaseId = await plan(id, educator, { authorisationRef: '' });
		const before = await snapshot();
		const message = refusal(await complete(id, releaseId, educator));
		expect(message).toMatch(/authorisation reference/);
		expect(message).not.toMatch(/veterinary clearance/);
		expect(await snapshot()).toEqual(before);
	});

	it('is refused without the vet clearance, naming it, and changes nothing', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Sin Vet', educator);
		const releaseId = await plan(id, educator, { vetClearedBy: '', vetClearedOn: '' });
		const before = await snapshot();
		const message = refusal(await complete(id, releaseId, educator));
		expect(message).toMatch(/veterinary clearance/);
		expect(message).not.toMatch(/authorisation reference/);
		expect(await snapshot()).toEqual(before);
	});

	it('names both when both are missing', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Sin Nada', educator);
		const releaseId = await plan(id, educator, {
			authorisationRef: '',
			vetClearedBy: '',
			vetClearedOn: ''
		});
		expect(refusal(await complete(id, releaseId, educator))).toBe(
			'The release cannot be marked done yet. Record the wildlife agency’s authorisation reference and the veterinary clearance (who cleared the turtle, and when).'
		);
	});

	it('is refused while the patient is still in rehabilitation', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Recaida', educator);
		const releaseId = await plan(id, educator);
		await db().transaction((tx) => changeStatus(tx, id, 'in_rehabilitation', educator, 'Setback'));
		const before = await snapshot();
		expect(refusal(await complete(id, releaseId, educator))).toMatch(
			/Set the status to “Ready for release” before marking the release done/
		);
		expect(await snapshot()).toEqual(before);
	});

	it('with both records: releases the patient, logs it, and stores one public event', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Marejada', educator);
		const releaseId = await plan(id, educator);
		const logBefore = await rows(db, patientStatusLog);

		const result = await complete(id, releaseId, educator);
		expect(result).toEqual({
			form: 'release',
			done: 'Release marked done; the patient is now “Released”.'
		});

		const [patient] = await db().select().from(patients).where(eq(patients.id, id));
		expect(patient.status).toBe('released');
		const [release] = await db().select().from(releases).where(eq(releases.id, releaseId));
		expect(release.doneBy).toBe(educator.id);
		expect(release.doneAt).toBeInstanceOf(Date);

		expect(await rows(db, patientStatusLog)).toBe(logBefore + 1);
		const [last] = await db()
			.select()
			.from(patientStatusLog)
			.where(eq(patientStatusLog.patientId, id))
			.orderBy(asc(patientStatusLog.id))
			.then((all) => all.slice(-1));
		expect(last).toMatchObject({
			fromStatus: 'ready_for_release',
			toStatus: 'released',
			changedBy: educator.id
		});

		const events = await db().select().from(patientEvents).where(eq(patientEvents.patientId, id));
		expect(events).toHaveLength(1);
		expect(events[0]).toMatchObject({
			kind: 'released',
			dedupeKey: `released:${releaseId}`,
			processedAt: null
		});
		expect(events[0].payload).toEqual({
			releaseOn: release.releaseOn,
			publicArea: 'off the south coast',
			habitat: 'seagrass_bed'
		});
		// Nothing staff-only in the event, in any form.
		const text = JSON.stringify(events[0]);
		for (const secret of [
			SITE.lat,
			SITE.lon,
			'17.91',
			'66.25',
			SITE.notes,
			'AGENCY-REL',
			'Example Vet'
		]) {
			expect(text).not.toContain(secret);
		}
	});

	it('a second time changes nothing', async () => {
		const educator = await person(['educator']);
		const admin = await person(['admin']);
		const id = await readyPatient('Dos Veces', educator);
		const releaseId = await plan(id, educator);
		await complete(id, releaseId, educator);
		const before = await snapshot();

		expect(await complete(id, releaseId, admin)).toEqual({
			form: 'release',
			done: 'This release was already marked done; nothing changed.'
		});
		expect(await completeRelease(releaseId, admin)).toMatchObject({ outcome: 'already_done' });
		expect(await snapshot()).toEqual(before);
		const [release] = await db().select().from(releases).where(eq(releases.id, releaseId));
		expect(release.doneBy).toBe(educator.id);

		// Re-admitted later, the old release still changes nothing.
		await db().transaction((tx) => changeStatus(tx, id, 'admitted', educator, 'Stranded again'));
		const readmitted = await snapshot();
		expect(await completeRelease(releaseId, admin)).toMatchObject({ outcome: 'already_done' });
		expect(await snapshot()).toEqual(readmitted);
	});

	it('stores no event for a patient hidden from the public', async () => {
		const educator = await person(['educator']);
		const id = await readyPatient('Oculta', educator);
		await setPublicTreatment(id, 'hidden', null, educator);
		const releaseId = await plan(id, educator);
		await complete(id, releaseId, educator);
		const [patient] = await db().select().from(patients).where(eq(patients.id, id));
		expect(patient.status).toBe('released');
		expect(await db().select().from(patientEvents).where(eq(patientEvents.patientId, id))).toEqual(
			[]
		);
	});

	it('will not complete another patient’s release from this page', async () => {
		const educator = await person(['educator']);
		const a = await readyPatient('Uno', educator);
		const b = await readyPatient('Otro', educator);
		const releaseOfB = await plan(b, educator);
		const before = await snapshot();
		expect(refusal(await complete(a, releaseOfB, educator))).toMatch(/not this patient’s/);
		expect(await snapshot()).toEqual(before);
	});
});
