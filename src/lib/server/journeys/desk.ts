// The Tracking desk's reads and changes (staff only).
import { asc, desc, eq } from 'drizzle-orm';
import { db, type Executor } from '../db';
import {
	journeys,
	organisationSettings,
	patients,
	positionImports,
	releases,
	trackingProfiles,
	users,
	CELL_SIZE_VALUES,
	LOCATION_CLASS_VALUES
} from '../db/schema';
import { audit } from '../audit';
import { ensureTrackingProfile, recomputeJourney } from './recompute';

export { CELL_SIZE_VALUES, LOCATION_CLASS_VALUES };

/** A patient as the desk needs it, by slug; staff only. */
export async function deskPatient(slug: string, executor: Executor = db()) {
	const [row] = await executor
		.select({
			id: patients.id,
			slug: patients.slug,
			name: patients.name,
			species: patients.species,
			status: patients.status,
			publicTreatment: patients.publicTreatment,
			transmitterId: patients.transmitterId
		})
		.from(patients)
		.where(eq(patients.slug, slug));
	return row ?? null;
}

/** Every patient with its tracking figures, for the desk's list. */
export async function deskOverview(executor: Executor = db()) {
	return executor
		.select({
			slug: patients.slug,
			name: patients.name,
			status: patients.status,
			transmitterId: patients.transmitterId,
			flipperTags: patients.flipperTags,
			rawCount: trackingProfiles.rawCount,
			keptCount: trackingProfiles.keptCount,
			rejectedCount: trackingProfiles.rejectedCount,
			lastFixAt: trackingProfiles.lastFixAt,
			silentSince: trackingProfiles.silentSince,
			computedAt: trackingProfiles.computedAt
		})
		.from(patients)
		.leftJoin(trackingProfiles, eq(trackingProfiles.patientId, patients.id))
		.orderBy(asc(patients.name));
}

export async function deskDetail(patientId: string, executor: Executor = db()) {
	const profile = await ensureTrackingProfile(executor, patientId);
	const imports = await executor
		.select({
			id: positionImports.id,
			fileName: positionImports.fileName,
			format: positionImports.format,
			transmitterId: positionImports.transmitterId,
			rowsRead: positionImports.rowsRead,
			rowsAdded: positionImports.rowsAdded,
			rowsAlreadyStored: positionImports.rowsAlreadyStored,
			rowsRefused: positionImports.rowsRefused,
			problems: positionImports.problems,
			createdAt: positionImports.createdAt,
			uploadedBy: users.name
		})
		.from(positionImports)
		.leftJoin(users, eq(users.id, positionImports.uploadedBy))
		.where(eq(positionImports.patientId, patientId))
		.orderBy(desc(positionImports.createdAt))
		.limit(20);
	const [release] = await executor
		.select({ releaseOn: releases.releaseOn, doneAt: releases.doneAt })
		.from(releases)
		.where(eq(releases.patientId, patientId))
		.orderBy(desc(releases.releaseOn))
		.limit(1);
	const [journey] = await executor
		.select({ geojson: journeys.geojson, cutoffDate: journeys.cutoffDate })
		.from(journeys)
		.where(eq(journeys.patientId, patientId));
	return { profile, imports, release: release ?? null, journey: journey ?? null };
}

export interface TrackingSettingsInput {
	delayDays: number;
	cellDeg: (typeof CELL_SIZE_VALUES)[number];
	minimumClass: (typeof LOCATION_CLASS_VALUES)[number];
	maxSpeedMs: number | null;
}

/** Saves a patient's cleaning and publication settings and recomputes the journey. */
export async function saveTrackingSettings(
	patientId: string,
	input: TrackingSettingsInput,
	actorId: string,
	now: number = Date.now()
) {
	return db().transaction(async (tx) => {
		const before = await ensureTrackingProfile(tx, patientId);
		await tx
			.update(trackingProfiles)
			.set({ ...input, updatedAt: new Date(now) })
			.where(eq(trackingProfiles.patientId, patientId));
		await audit(tx, actorId, 'tracking.settings_changed', patientId, {
			from: {
				delayDays: before.delayDays,
				cellDeg: before.cellDeg,
				minimumClass: before.minimumClass,
				maxSpeedMs: before.maxSpeedMs
			},
			to: { ...input }
		});
		return recomputeJourney(tx, patientId, now);
	});
}

/** Sets the patient's current satellite transmitter ID (staff only). */
export async function setTransmitter(
	patientId: string,
	transmitterId: string | null,
	actorId: string
) {
	await db().transaction(async (tx) => {
		await tx
			.update(patients)
			.set({ transmitterId, updatedAt: new Date() })
			.where(eq(patients.id, patientId));
		await audit(tx, actorId, 'tracking.transmitter_set', patientId, { transmitterId });
	});
}

export async function recomputeNow(patientId: string, now: number = Date.now()) {
	return db().transaction((tx) => recomputeJourney(tx, patientId, now));
}

export interface DeskSettingsInput {
	waypointStepKm: number;
	silenceDays: number;
	inlandMetres: number;
}

/** The organisation-wide tracking rules, with the defaults when none have been saved. */
export async function getDeskSettings(executor: Executor = db()): Promise<DeskSettingsInput> {
	const [row] = await executor
		.select({
			waypointStepKm: organisationSettings.waypointStepKm,
			silenceDays: organisationSettings.silenceDays,
			inlandMetres: organisationSettings.inlandMetres
		})
		.from(organisationSettings);
	return row ?? { waypointStepKm: 500, silenceDays: 30, inlandMetres: 5000 };
}

/**
 * Saves the organisation-wide tracking rules and computes every tracked patient again, in one
 * transaction. Refuses (returns false) when the organisation settings have not been saved yet.
 */
export async function saveDeskSettings(
	input: DeskSettingsInput,
	actorId: string,
	now: number = Date.now()
): Promise<boolean> {
	return db().transaction(async (tx) => {
		const updated = await tx
			.update(organisationSettings)
			.set(input)
			.returning({ id: organisationSettings.id });
		if (!updated.length) return false;
		await audit(tx, actorId, 'tracking.desk_settings_changed', 'organisation', { ...input });
		const tracked = await tx
			.select({ patientId: trackingProfiles.patientId })
			.from(trackingProfiles);
		for (const { patientId } of tracked) await recomputeJourney(tx, patientId, now);
		return true;
	});
}
