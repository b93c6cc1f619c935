import { isActionFailure, isRedirect } from '@sveltejs/kit';
import { and, asc, eq } from 'drizzle-orm';
import { describe, expect, it } from 'vitest';
import { auditLog, media, patientPhotos, patients, patientStatusLog } from '$lib/server/db/schema';
import { NewsroomRefusal, type PatientInput } from '$lib/server/newsroom/patient-rules';
import {
	addGalleryPhoto,
	listGallery,
	moveGalleryPhoto,
	setHeroPhoto
} from '$lib/server/newsroom/patient-photos';
import {
	changeStatus,
	createPatient,
	setPublicTreatment,
	updatePatient
} from '$lib/server/newsroom/patients';
import { actions as patientActions } from '../../src/routes/staff/newsroom/patients/[id]/+page.server';
import { actions as newActions } from '../../src/routes/staff/newsroom/patients/new/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { daysAgo, fakeEvent, people, rows } from './newsroom-helpers';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);

const goodForm = {
	name: 'Marea',
	species: 'loggerhead',
	lifeStage: 'subadult',
	carapaceLengthCm: '71.5',
	weightKg: '38.2',
	admittedOn: daysAgo(10),
	admissionReason: 'fishing_hook_or_line',
	summary: 'Marea swallowed a hook; the team removed it and Marea is eating well.',
	strandedOn: daysAgo(11),
	strandingPlace: 'Jetty by the old lighthouse',
	strandingLatitude: '17.951234',
	strandingLongitude: '-66.270001',
	flipperTags: 'TWD-9001, TWD-9002',
	microchip: '999000000090011',
	transmitterId: '',
	medicalNotes: 'Hook in the oesophagus, removed under sedation.',
	agencyCaseNumber: 'CASE-26-001'
};

function input(over: Partial<PatientInput> = {}): PatientInput {
	return {
		name: 'Brisa',
		species: 'green',
		lifeStage: 'juvenile',
		carapaceLengthCm: 46.2,
		weightKg: 12.4,
		admittedOn: daysAgo(30),
		admissionReason: 'fibropapillomatosis',
		summary: '',
		strandedOn: null,
		strandingPlace: null,
		strandingLatitude: null,
		strandingLongitude: null,
		flipperTags: [],
		microchip: null,
		transmitterId: null,
		medicalNotes: null,
		agencyCaseNumber: null,
		...over
	};
}

async function snapshot() {
	return {
		patients: await db().select().from(patients).orderBy(asc(patients.id)),
		log: await rows(db, patientStatusLog),
		audit: await rows(db, auditLog)
	};
}

function failure(result: unknown) {
	expect(isActionFailure(result)).toBe(true);
	if (!isActionFailure(result)) throw new Error('expected a failure');
	expect(result.status).toBe(400);
	return result.data as unknown as { message?: string; errors?: Record<string, string> };
}

async function patientRow(id: string) {
	const [row] = await db().select().from(patients).where(eq(patients.id, id));
	return row;
}

describe('creating a patient', () => {
	it('answers bad input with a message per field and writes nothing', async () => {
		const educator = await person(['educator']);
		const before = await snapshot();
		const result = await newActions.create(
			fakeEvent('/staff/newsroom/patients/new', educator, {
				...goodForm,
				name: ' ',
				species: 'tortoise',
				carapaceLengthCm: '2',
				weightKg: '1200',
				admittedOn: daysAgo(-3),
				strandingLatitude: '91',
				strandingLongitude: 'west'
			})
		);
		expect(failure(result).errors).toEqual({
			name: 'Enter the name staff gave the turtle.',
			species: 'Choose the species.',
			carapaceLengthCm: 'Enter a length between 3 and 250 cm.',
			weightKg: 'Enter a weight between 0.01 and 1000 kg (a 40 g post-hatchling is 0.04).',
			admittedOn: 'The admission date cannot be in the future.',
			strandingLatitude:
				'Enter a latitude between −90 and 90 (decimal degrees, south is negative).',
			strandingLongitude: 'Enter the longitude in decimal degrees, like -66.2215.'
		});
		expect(await snapshot()).toEqual(before);
	});

	it('refuses rules that span fields (stranding after admission, half a position)', async () => {
		const educator = await person(['educator']);
		const before = await snapshot();
		const result = await newActions.create(
			fakeEvent('/staff/newsroom/patients/new', educator, {
				...goodForm,
				strandedOn: daysAgo(5),
				strandingLongitude: ''
			})
		);
		expect(failure(result).errors).toEqual({
			strandedOn: 'The stranding date cannot be after the admission date.',
			strandingLongitude: 'Enter the longitude too, or clear the latitude.'
		});
		expect(await snapshot()).toEqual(before);
	});

	it('the service itself refuses bad input, for callers that skip the form', async () => {
		const educator = await person(['educator']);
		const before = await snapshot();
		await expect(
			createPatient(input({ weightKg: 0, admittedOn: '2999-01-01' }), educator)
		).rejects.toMatchObject({
			errors: {
				weightKg: expect.stringMatching(/between 0.01 and 1000/),
				admittedOn: 'The admission date cannot be in the future.'
			}
		});
		expect(await snapshot()).toEqual(before);
	});

	it('stores every field, a unique slug and the first status-log row', async () => {
		const educator = await person(['educator']);
		let location = '';
		try {
			await newActions.create(fakeEvent('/staff/newsroom/patients/new', educator, goodForm));
			expect.unreachable('a created patient redirects to its page');
		} catch (error) {
			expect(isRedirect(error) && error.status).toBe(303);
			if (isRedirect(error)) location = error.location;
		}
		const id = location.match(/patients\/([0-9a-f-]+)\?created=1$/)?.[1];
		expect(id).toBeDefined();
		const row = await patientRow(id!);
		expect(row).toMatchObject({
			slug: 'marea',
			name: 'Marea',
			status: 'admitted',
			carapaceLengthCm: '71.5',
			weightKg: '38.20',
			strandingLatitude: '17.951234',
			strandingLongitude: '-66.270001',
			flipperTags: ['TWD-9001', 'TWD-9002'],
			transmitterId: null,
			agencyCaseNumber: 'CASE-26-001'
		});
		const log = await db()
			.select()
			.from(patientStatusLog)
			.where(eq(patientStatusLog.patientId, id!));
		expect(log).toEqual([
			expect.objectContaining({ fromStatus: null, toStatus: 'admitted', changedBy: educator.id })
		]);

		const second = await createPatient(input({ name: 'Marea' }), educator);
		const third = await createPatient(input({ name: 'MAREA!' }), educator);
		expect([second.slug, third.slug]).toEqual(['marea-2', 'marea-3']);
	});
});

describe('updating a patient', () => {
	it('refuses bad input through the form and leaves the row as it was', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Coral' }), educator);
		const before = await snapshot();
		const result = await patientActions.profile(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ ...goodForm, name: 'Coral', weightKg: '0.001', strandingLongitude: '-181' },
				{ id }
			)
		);
		expect(failure(result).errors).toEqual({
			weightKg: 'Enter a weight between 0.01 and 1000 kg (a 40 g post-hatchling is 0.04).',
			strandingLongitude:
				'Enter a longitude between −180 and 180 (decimal degrees, west is negative).'
		});
		expect(await snapshot()).toEqual(before);
	});

	it('saves public and staff-only fields, keeps the slug, and audits field names only', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Ola' }), educator);
		const result = await patientActions.profile(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ ...goodForm, name: 'Ola Grande' },
				{ id }
			)
		);
		expect(result).toEqual({ form: 'profile', done: 'Profile saved.' });
		const row = await patientRow(id);
		expect(row).toMatchObject({
			slug: 'ola',
			name: 'Ola Grande',
			species: 'loggerhead',
			medicalNotes: 'Hook in the oesophagus, removed under sedation.'
		});
		const [entry] = await db()
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.action, 'patient.updated'), eq(auditLog.subject, id)));
		expect(entry.actorId).toBe(educator.id);
		expect(entry.details.fields).toContain('medicalNotes');
		expect(JSON.stringify(entry.details)).not.toContain('oesophagus');
		expect(JSON.stringify(entry.details)).not.toContain('17.951234');
	});

	it('refuses the service call with bad numbers and changes nothing', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Perla' }), educator);
		const before = await patientRow(id);
		await expect(updatePatient(id, input({ carapaceLengthCm: 251 }), educator)).rejects.toThrow(
			NewsroomRefusal
		);
		expect(await patientRow(id)).toEqual(before);
	});
});

describe('status changes', () => {
	it('refuses a change the rules do not allow, with the message, and logs nothing', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Niebla' }), educator);
		const before = await snapshot();
		const result = await patientActions.status(
			fakeEvent(`/staff/newsroom/patients/${id}`, educator, { to: 'released' }, { id })
		);
		expect(failure(result).message).toBe(
			'A patient becomes “Released” only when the release is marked done in the Release section, where the wildlife agency’s authorisation and the veterinary clearance are recorded.'
		);
		expect(await snapshot()).toEqual(before);

		const direct = db().transaction((tx) =>
			changeStatus(tx, id, 'admitted', educator, 'no change')
		);
		await expect(direct).rejects.toThrow('The patient is already “Just admitted”.');
		expect(await snapshot()).toEqual(before);
	});

	it('logs a valid change with who, when, from and to, in the audit log too', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Bruma' }), educator);
		const started = Date.now();
		const result = await patientActions.status(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ to: 'in_rehabilitation', note: 'Eating on her own.' },
				{ id }
			)
		);
		expect(result).toEqual({ form: 'status', done: 'Status changed to “In rehabilitation”.' });
		expect((await patientRow(id)).status).toBe('in_rehabilitation');
		const log = await db()
			.select()
			.from(patientStatusLog)
			.where(eq(patientStatusLog.patientId, id))
			.orderBy(asc(patientStatusLog.id));
		expect(log).toHaveLength(2);
		expect(log[1]).toMatchObject({
			fromStatus: 'admitted',
			toStatus: 'in_rehabilitation',
			note: 'Eating on her own.',
			changedBy: educator.id
		});
		expect(log[1].changedAt.getTime()).toBeGreaterThanOrEqual(started - 1000);
		expect(log[1].changedAt.getTime()).toBeLessThanOrEqual(Date.now() + 1000);
		const audits = await db()
			.select()
			.from(auditLog)
			.where(and(eq(auditLog.action, 'patient.status_changed'), eq(auditLog.subject, id)));
		expect(audits).toEqual([
			expect.objectContaining({
				actorId: educator.id,
				details: { from: 'admitted', to: 'in_rehabilitation' }
			})
		]);
	});

	it('asks for confirmation before "died", then hides the profile until staff choose', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Estela' }), educator);
		const before = await snapshot();
		const unconfirmed = await patientActions.status(
			fakeEvent(`/staff/newsroom/patients/${id}`, educator, { to: 'died' }, { id })
		);
		expect(failure(unconfirmed).errors).toHaveProperty('confirmFinal');
		expect(await snapshot()).toEqual(before);

		await patientActions.status(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ to: 'died', confirmFinal: 'on' },
				{ id }
			)
		);
		expect(await patientRow(id)).toMatchObject({ status: 'died', publicTreatment: 'hidden' });

		// Final: nothing moves it, and nothing is logged for trying.
		const after = await snapshot();
		const again = await patientActions.status(
			fakeEvent(`/staff/newsroom/patients/${id}`, educator, { to: 'admitted' }, { id })
		);
		expect(failure(again).message).toMatch(/final/);
		expect(await snapshot()).toEqual(after);
	});
});

describe('public treatment', () => {
	it('needs a note for a memorial and keeps memorials for turtles that died', async () => {
		const educator = await person(['educator']);
		const { id: living } = await createPatient(input({ name: 'Sal' }), educator);
		await db().transaction((tx) => changeStatus(tx, living, 'permanent_resident', educator));
		await expect(setPublicTreatment(living, 'memorial', 'A note.', educator)).rejects.toMatchObject(
			{ errors: { publicTreatment: expect.stringMatching(/died/) } }
		);

		const { id } = await createPatient(input({ name: 'Alba' }), educator);
		await db().transaction((tx) => changeStatus(tx, id, 'died', educator));
		const before = await snapshot();
		const missing = await patientActions.treatment(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ publicTreatment: 'memorial', memorialNote: '  ' },
				{ id }
			)
		);
		expect(failure(missing).errors).toEqual({
			memorialNote: 'Write the memorial note the public will read.'
		});
		expect(await snapshot()).toEqual(before);

		const saved = await patientActions.treatment(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ publicTreatment: 'memorial', memorialNote: 'Alba was cared for by many hands.' },
				{ id }
			)
		);
		expect(saved).toEqual({ form: 'treatment', done: 'Public page updated.' });
		expect(await patientRow(id)).toMatchObject({
			publicTreatment: 'memorial',
			memorialNote: 'Alba was cared for by many hands.'
		});
	});
});

describe('photos', () => {
	async function image(alt: string): Promise<string> {
		const id = crypto.randomUUID();
		await db().insert(media).values({ id, alt, width: 1600, height: 1200 });
		return id;
	}

	it('sets a hero, adds, reorders and removes gallery photos', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Foto' }), educator);
		const [a, b, c] = [await image('A'), await image('B'), await image('C')];

		await setHeroPhoto(id, a, null, educator);
		expect(await patientRow(id)).toMatchObject({ heroImage: `/media/${a}/960.webp`, heroAlt: 'A' });

		for (const m of [a, b, c]) await addGalleryPhoto(id, m, `Caption ${m}`, educator);
		await expect(addGalleryPhoto(id, b, null, educator)).rejects.toThrow(/already in the gallery/);
		await moveGalleryPhoto(id, c, 'up', educator);
		expect((await listGallery(id)).map((p) => p.mediaId)).toEqual([a, c, b]);
		await moveGalleryPhoto(id, a, 'up', educator); // already first: nothing to do
		expect((await listGallery(id)).map((p) => p.mediaId)).toEqual([a, c, b]);

		const removed = await patientActions.removePhoto(
			fakeEvent(`/staff/newsroom/patients/${id}`, educator, { mediaId: c }, { id })
		);
		expect(removed).toEqual({ form: 'gallery', done: 'Photo removed from the gallery.' });
		expect((await listGallery(id)).map((p) => p.mediaId)).toEqual([a, b]);
		// The image stays in the media library; stories may use it.
		expect(await db().select().from(media).where(eq(media.id, c))).toHaveLength(1);
	});

	it('refuses an unknown image and writes nothing', async () => {
		const educator = await person(['educator']);
		const { id } = await createPatient(input({ name: 'Nada' }), educator);
		const before = await rows(db, patientPhotos);
		const result = await patientActions.addPhoto(
			fakeEvent(
				`/staff/newsroom/patients/${id}`,
				educator,
				{ mediaId: crypto.randomUUID() },
				{ id }
			)
		);
		expect(failure(result).message).toMatch(/not found/);
		expect(await rows(db, patientPhotos)).toBe(before);
	});
});
