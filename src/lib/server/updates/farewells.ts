// Last-signal notes: when a transmitter has gone quiet for good, supporters hear about it only in
// words a person at the hospital wrote for that patient (never a template's guess about the
// animal's fate). Educators write the note, or decide that nothing is sent.
import { and, asc, eq, isNull } from 'drizzle-orm';
import { db } from '../db';
import { patientEvents, patients } from '../db/schema';
import { audit } from '../audit';
import { kickOutbox } from '../mail/worker';

export const FAREWELL_LIMITS = { min: 20, max: 2000 } as const;

/** Last-signal events waiting for a note. */
export async function pendingFarewells() {
	return db()
		.select({
			id: patientEvents.id,
			occurredAt: patientEvents.occurredAt,
			payload: patientEvents.payload,
			patientId: patients.id,
			patientName: patients.name,
			patientStatus: patients.status,
			publicTreatment: patients.publicTreatment
		})
		.from(patientEvents)
		.innerJoin(patients, eq(patients.id, patientEvents.patientId))
		.where(
			and(
				eq(patientEvents.kind, 'last_signal'),
				isNull(patientEvents.processedAt),
				isNull(patientEvents.approvedAt)
			)
		)
		.orderBy(asc(patientEvents.id));
}

export class FarewellRefused extends Error {}

/** Approves the note; the update goes out with the next fan-out run. */
export async function approveFarewell(eventId: number, message: string, actorId: string) {
	const text = message.trim();
	if (text.length < FAREWELL_LIMITS.min || text.length > FAREWELL_LIMITS.max) {
		throw new FarewellRefused(
			`Write a note of ${FAREWELL_LIMITS.min} to ${FAREWELL_LIMITS.max} characters.`
		);
	}
	await db().transaction(async (tx) => {
		const updated = await tx
			.update(patientEvents)
			.set({ message: text, approvedBy: actorId, approvedAt: new Date() })
			.where(
				and(
					eq(patientEvents.id, eventId),
					eq(patientEvents.kind, 'last_signal'),
					isNull(patientEvents.processedAt),
					isNull(patientEvents.approvedAt)
				)
			)
			.returning({ id: patientEvents.id, patientId: patientEvents.patientId });
		if (!updated.length) throw new FarewellRefused('That note was already written or withdrawn.');
		await audit(tx, actorId, 'update.last_signal.approved', updated[0].patientId, { eventId });
	});
	kickOutbox();
}

/** Decides that supporters get no last-signal update for this event. */
export async function withholdFarewell(eventId: number, actorId: string) {
	await db().transaction(async (tx) => {
		const updated = await tx
			.update(patientEvents)
			.set({ processedAt: new Date(), outcome: 'withheld: staff chose to send nothing' })
			.where(
				and(
					eq(patientEvents.id, eventId),
					eq(patientEvents.kind, 'last_signal'),
					isNull(patientEvents.processedAt),
					isNull(patientEvents.approvedAt)
				)
			)
			.returning({ patientId: patientEvents.patientId });
		if (!updated.length) throw new FarewellRefused('That note was already written or withdrawn.');
		await audit(tx, actorId, 'update.last_signal.withheld', updated[0].patientId, { eventId });
	});
}
