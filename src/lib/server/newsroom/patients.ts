// Patient records as education staff keep them: the whole row, staff-only fields included. Public
// code never comes here; it reads through `publicPatientColumns` (src/lib/server/patients.ts).
import { randomUUID } from 'node:crypto';
import { eq, like, or } from 'drizzle-orm';
import { uniqueSlug } from '../../slug';
import { audit } from '../audit';
import { db, type Executor } from '../db';
import { patients, patientStatusLog, type PatientStatus } from '../db/schema';
import {
	checkPublicTreatment,
	checkStatusChange,
	NewsroomRefusal,
	patientSlugBase,
	TEXT_LIMITS,
	validatePatientInput,
	type PatientInput,
	type PublicTreatment
} from './patient-rules';

export interface Actor {
	id: string;
}

export type PatientRow = typeof patients.$inferSelect;

const CHECK_FIELDS = 'Some fields need attention; see the messages beside them.';

function refuseInvalid(input: PatientInput, now: Date): void {
	const errors = validatePatientInput(input, now);
	if (Object.keys(errors).length > 0) throw new NewsroomRefusal(CHECK_FIELDS, errors);
}

/** Numeric columns take strings; rounding here matches the column's scale. */
function fixed(value: number | null, digits: number): string | null {
	return value === null ? null : value.toFixed(digits);
}

function columns(input: PatientInput) {
	return {
		name: input.name.trim(),
		species: input.species,
		lifeStage: input.lifeStage,
		carapaceLengthCm: fixed(input.carapaceLengthCm, 1),
		weightKg: fixed(input.weightKg, 2),
		admittedOn: input.admittedOn,
		admissionReason: input.admissionReason,
		summary: input.summary.trim(),
		strandedOn: input.strandedOn,
		strandingPlace: input.strandingPlace,
		strandingLatitude: fixed(input.strandingLatitude, 6),
		strandingLongitude: fixed(input.strandingLongitude, 6),
		flipperTags: input.flipperTags,
		microchip: input.microchip,
		transmitterId: input.transmitterId,
		medicalNotes: input.medicalNotes,
		agencyCaseNumber: input.agencyCaseNumber
	};
}

export function isUniqueViolation(error: unknown, constraint: string): boolean {
	for (let e: unknown = error; e && typeof e === 'object'; e = (e as { cause?: unknown }).cause) {
		const { code, constraint: name } = e as { code?: string; constraint?: string };
		if (code === '23505' && (name === undefined || name === constraint)) return true;
	}
	return false;
}

async function takenSlugs(tx: Executor, base: string): Promise<Set<string>> {
	const escaped = base.replace(/[\\%_]/g, (c) => `\\${c}`);
	const rows = await tx
		.select({ slug: patients.slug })
		.from(patients)
		.where(or(eq(patients.slug, base), like(patients.slug, `${escaped}-%`)));
	return new Set(rows.map((r) => r.slug));
}

/**
 * Adds a patient, status "admitted", with a first status-log row. The slug comes from the name
 * and is made unique; two people adding the same name at once make the second try again.
 */
export async function createPatient(
	input: PatientInput,
	actor: Actor,
	now: Date = new Date()
): Promise<{ id: string; slug: string }> {
	refuseInvalid(input, now);
	const values = columns(input);
	for (let attempt = 1; ; attempt++) {
		try {
			return await db().transaction(async (tx) => {
				const id = randomUUID();
				const base = patientSlugBase(values.name);
				const slug = uniqueSlug(base, await takenSlugs(tx, base));
				await tx.insert(patients).values({ id, slug, ...values, status: 'admitted' });
				await tx.insert(patientStatusLog).values({
					patientId: id,
					fromStatus: null,
					toStatus: 'admitted',
					changedBy: actor.id
				});
				await audit(tx, actor.id, 'patient.created', id, { name: values.name, slug });
				return { id, slug };
			});
		} catch (error) {
			if (attempt < 3 && isUniqueViolation(error, 'patients_slug_unique')) continue;
			throw error;
		}
	}
}

/**
 * Saves the profile. The slug stays as it was made: links already sent in e-mails, feeds and
 * shares point at it, so a rename must not break them.
 */
export async function updatePatient(
	patientId: string,
	input: PatientInput,
	actor: Actor,
	now: Date = new Date()
): Promise<void> {
	refuseInvalid(input, now);
	const values = columns(input);
	await db().transaction(async (tx) => {
		const [before] = await tx
			.select()
			.from(patients)
			.where(eq(patients.id, patientId))
			.for('update');
		if (!before) throw new NewsroomRefusal('That patient no longer exists.');
		const changed = (Object.keys(values) as (keyof typeof values)[]).filter(
			(key) => JSON.stringify(values[key]) !== JSON.stringify(before[key])
		);
		if (changed.length === 0) return;
		await tx
			.update(patients)
			.set({ ...values, updatedAt: new Date() })
			.where(eq(patients.id, patientId));
		// Field names only: the audit log is no place for a copy of staff-only values.
		await audit(tx, actor.id, 'patient.updated', patientId, { fields: changed });
	});
}

async function lockPatient(tx: Executor, patientId: string): Promise<PatientRow> {
	const [row] = await tx.select().from(patients).where(eq(patients.id, patientId)).for('update');
	if (!row) throw new NewsroomRefusal('That patient no longer exists.');
	return row;
}

/**
 * Writes a status change the rules allow: the patient row, the status log (who, when, from, to)
 * and the audit log. A patient who died is hidden from the public until staff choose how to
 * remember them, so that the news does not first appear as a bare status badge.
 */
export async function applyStatusChange(
	tx: Executor,
	patient: Pick<PatientRow, 'id' | 'status' | 'publicTreatment'>,
	to: PatientStatus,
	actor: Actor,
	note: string | null
): Promise<void> {
	const hide = to === 'died' && patient.publicTreatment === 'shown';
	await tx
		.update(patients)
		.set({ status: to, updatedAt: new Date(), ...(hide ? { publicTreatment: 'hidden' } : {}) })
		.where(eq(patients.id, patient.id));
	await tx.insert(patientStatusLog).values({
		patientId: patient.id,
		fromStatus: patient.status,
		toStatus: to,
		note,
		changedBy: actor.id
	});
	await audit(tx, actor.id, 'patient.status_changed', patient.id, { from: patient.status, to });
	if (hide) {
		await audit(tx, actor.id, 'patient.public_treatment_changed', patient.id, {
			from: 'shown',
			to: 'hidden',
			reason: 'died'
		});
	}
}

/** A status edit by staff. Refuses, writing nothing, what the rules do not allow. */
export async function changeStatus(
	tx: Executor,
	patientId: string,
	to: PatientStatus,
	actor: Actor,
	note?: string | null
): Promise<void> {
	const cleanNote = note?.trim() || null;
	if (cleanNote && cleanNote.length > TEXT_LIMITS.statusNote) {
		throw new NewsroomRefusal(`Keep the note under ${TEXT_LIMITS.statusNote} characters.`);
	}
	const patient = await lockPatient(tx, patientId);
	const refusal = checkStatusChange(patient.status, to, 'edit');
	if (refusal) throw new NewsroomRefusal(refusal);
	await applyStatusChange(tx, patient, to, actor, cleanNote);
}

/** Chooses what the public sees of a patient: the profile, a memorial (died only), or nothing. */
export async function setPublicTreatment(
	patientId: string,
	treatment: PublicTreatment,
	memorialNote: string | null,
	actor: Actor
): Promise<void> {
	const note = memorialNote?.trim() || null;
	await db().transaction(async (tx) => {
		const patient = await lockPatient(tx, patientId);
		const errors = checkPublicTreatment(patient.status, treatment, note);
		const first = Object.values(errors)[0];
		if (first) throw new NewsroomRefusal(first, errors);
		if (patient.publicTreatment === treatment && patient.memorialNote === note) return;
		await tx
			.update(patients)
			.set({ publicTreatment: treatment, memorialNote: note, updatedAt: new Date() })
			.where(eq(patients.id, patientId));
		await audit(tx, actor.id, 'patient.public_treatment_changed', patientId, {
			from: patient.publicTreatment,
			to: treatment,
			...(patient.memorialNote !== note ? { memorialNoteChanged: true } : {})
		});
	});
}
