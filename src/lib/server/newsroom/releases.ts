// Release records. The exact site, the agency's authorisation and the vet's clearance are staff
// only; the public (and the "released" event that becomes the homecoming update) gets the date,
// the coarse area name and the habitat.
import { randomUUID } from 'node:crypto';
import { and, eq, isNull } from 'drizzle-orm';
import { audit } from '../audit';
import { db, type Executor } from '../db';
import { patientEvents, patients, positions, releases, type PatientStatus } from '../db/schema';
import { recomputeJourney } from '../journeys/recompute';
import {
	checkReleaseCompletion,
	NewsroomRefusal,
	validateReleaseInput,
	type ReleaseInput
} from './patient-rules';
import { applyStatusChange, type Actor } from './patients';

export type ReleaseRow = typeof releases.$inferSelect;

/** Statuses of patients whose release may be planned. */
export const PLANNABLE_STATUSES: readonly PatientStatus[] = [
	'admitted',
	'in_rehabilitation',
	'ready_for_release'
];

const CHECK_FIELDS = 'Some fields need attention; see the messages beside them.';

function columns(input: ReleaseInput) {
	return {
		releaseOn: input.releaseOn,
		publicArea: input.publicArea.trim(),
		habitat: input.habitat,
		siteLatitude: input.siteLatitude === null ? null : input.siteLatitude.toFixed(6),
		siteLongitude: input.siteLongitude === null ? null : input.siteLongitude.toFixed(6),
		siteNotes: input.siteNotes?.trim() || null,
		authorisationRef: input.authorisationRef?.trim() || null,
		vetClearedBy: input.vetClearedBy?.trim() || null,
		vetClearedOn: input.vetClearedOn,
		transmitterAttached: input.transmitterAttached
	};
}

function refuseInvalid(input: ReleaseInput, admittedOn: string, now: Date): void {
	const errors = validateReleaseInput(input, now);
	if (!errors.releaseOn && input.releaseOn < admittedOn) {
		errors.releaseOn = 'The release date cannot be before the admission date.';
	}
	if (Object.keys(errors).length > 0) throw new NewsroomRefusal(CHECK_FIELDS, errors);
}

async function lockPatient(tx: Executor, patientId: string) {
	const [row] = await tx
		.select({
			id: patients.id,
			name: patients.name,
			status: patients.status,
			publicTreatment: patients.publicTreatment,
			admittedOn: patients.admittedOn
		})
		.from(patients)
		.where(eq(patients.id, patientId))
		.for('update');
	if (!row) throw new NewsroomRefusal('That patient no longer exists.');
	return row;
}

async function lockRelease(tx: Executor, releaseId: string): Promise<ReleaseRow> {
	const [row] = await tx.select().from(releases).where(eq(releases.id, releaseId)).for('update');
	if (!row) throw new NewsroomRefusal('That release record no longer exists.');
	return row;
}

/**
 * Plans a release for a patient in care. One open plan per patient: a second would leave staff
 * unsure which one "Mark release done" completes.
 */
export async function planRelease(
	patientId: string,
	input: ReleaseInput,
	actor: Actor,
	now: Date = new Date()
): Promise<{ id: string }> {
	return db().transaction(async (tx) => {
		const patient = await lockPatient(tx, patientId);
		if (!PLANNABLE_STATUSES.includes(patient.status)) {
			throw new NewsroomRefusal(
				`A release can be planned only for a patient in care who may go back to the sea; ${patient.name} is not.`
			);
		}
		const [open] = await tx
			.select({ id: releases.id })
			.from(releases)
			.where(and(eq(releases.patientId, patientId), isNull(releases.doneAt)));
		if (open) {
			throw new NewsroomRefusal(`${patient.name} already has a planned release; edit that one.`);
		}
		refuseInvalid(input, patient.admittedOn, now);
		const id = randomUUID();
		await tx.insert(releases).values({ id, patientId, ...columns(input) });
		await audit(tx, actor.id, 'release.planned', patientId, {
			releaseId: id,
			releaseOn: input.releaseOn
		});
		return { id };
	});
}

/** Edits a planned release. A release that is done is history and stays as it was recorded. */
export async function updateRelease(
	releaseId: string,
	input: ReleaseInput,
	actor: Actor,
	now: Date = new Date()
): Promise<void> {
	await db().transaction(async (tx) => {
		const release = await lockRelease(tx, releaseId);
		if (release.doneAt) {
			throw new NewsroomRefusal('This release is done; its record can no longer be changed.');
		}
		const patient = await lockPatient(tx, release.patientId);
		refuseInvalid(input, patient.admittedOn, now);
		const values = columns(input);
		const changed = (Object.keys(values) as (keyof typeof values)[]).filter(
			(key) => values[key] !== release[key]
		);
		if (changed.length === 0) return;
		await tx
			.update(releases)
			.set({ ...values, updatedAt: new Date() })
			.where(eq(releases.id, releaseId));
		// Field names only: the site and the references stay out of the audit log.
		await audit(tx, actor.id, 'release.updated', release.patientId, {
			releaseId,
			fields: changed
		});
	});
}

/** Drops a planned release (plans change: weather, a setback, the agency's answer). */
export async function cancelRelease(releaseId: string, actor: Actor): Promise<void> {
	await db().transaction(async (tx) => {
		const release = await lockRelease(tx, releaseId);
		if (release.doneAt) {
			throw new NewsroomRefusal('This release is done; it cannot be cancelled.');
		}
		await tx.delete(releases).where(eq(releases.id, releaseId));
		await audit(tx, actor.id, 'release.cancelled', release.patientId, { releaseId });
	});
}

export type CompletionResult = { outcome: 'done' } | { outcome: 'already_done'; doneAt: Date };

/**
 * Marks a release done: in one transaction the release is stamped, the patient becomes
 * "released" (status log and audit), and a "released" event with public fields only is stored
 * for the homecoming update. Refuses, writing nothing, without the authorisation reference, the
 * vet clearance, or a patient judged ready for release. A second call changes nothing.
 *
 * A patient still "in rehabilitation" is refused rather than moved straight to released: the
 * status log should show someone judging the turtle ready before the release, and the fix is
 * one status change away.
 */
export async function completeRelease(
	releaseId: string,
	actor: Actor,
	now: Date = new Date()
): Promise<CompletionResult> {
	return db().transaction(async (tx) => {
		const release = await lockRelease(tx, releaseId);
		if (release.doneAt) return { outcome: 'already_done', doneAt: release.doneAt };
		const patient = await lockPatient(tx, release.patientId);
		const refusal = checkReleaseCompletion(release, patient.status, now);
		if (refusal) throw new NewsroomRefusal(refusal);

		await tx
			.update(releases)
			.set({ doneAt: now, doneBy: actor.id, updatedAt: now })
			.where(eq(releases.id, releaseId));
		await applyStatusChange(tx, patient, 'released', actor, `Release done: ${release.publicArea}`);
		await audit(tx, actor.id, 'release.completed', patient.id, { releaseId });
		// A hidden patient's supporters hear from staff in person; nothing automatic is stored.
		if (patient.publicTreatment !== 'hidden') {
			await tx
				.insert(patientEvents)
				.values({
					patientId: patient.id,
					kind: 'released',
					dedupeKey: `released:${releaseId}`,
					payload: {
						releaseOn: release.releaseOn,
						publicArea: release.publicArea,
						habitat: release.habitat
					},
					occurredAt: now
				})
				.onConflictDoNothing({ target: patientEvents.dedupeKey });
		}
		// Positions already uploaded (e.g. the transmitter's first days) become a public journey.
		const [tracked] = await tx
			.select({ id: positions.id })
			.from(positions)
			.where(eq(positions.patientId, patient.id))
			.limit(1);
		if (tracked) await recomputeJourney(tx, patient.id, now.getTime());
		return { outcome: 'done' };
	});
}
