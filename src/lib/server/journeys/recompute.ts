// Turns a patient's stored positions into the cleaned track and the public projection, and
// stores both: verdicts on `positions`, the projection in `journeys`, figures on
// `tracking_profiles`, and waypoint / last-signal events for supporter updates. Runs inside the
// caller's transaction, so an import and its projection land together or not at all.
import { and, desc, eq, isNotNull, sql } from 'drizzle-orm';
import type { Executor } from '../db';
import {
	journeys,
	organisationSettings,
	patientEvents,
	patients,
	positions,
	releases,
	trackingProfiles,
	type Species
} from '../db/schema';
import { strongEtag } from '../http';
import { cleanTrack, DEFAULT_MAX_SPEED_MS } from '../tracking/clean';
import { landFilterFor, loadLandMask } from '../tracking/landmask';
import { publicProjection, toGeoJSON, utcDate, type CellDeg } from '../tracking/projection';
import { DAY_MS, transmitterSilent } from '../tracking/silence';
import type { Fix } from '../tracking/types';
import { crossedSteps } from '../tracking/waypoints';

/**
 * Maximum plausible travel speed per species, m/s, for the speed filter. Every species uses the
 * argosfilter default (2 m/s) until staff set another value on the patient; sea turtles' sustained
 * travel speeds are well below it (common practice: the default is generous on purpose so that
 * only impossible jumps go).
 */
export const SPECIES_MAX_SPEED_MS: Readonly<Record<Species, number>> = {
	loggerhead: DEFAULT_MAX_SPEED_MS,
	green: DEFAULT_MAX_SPEED_MS,
	kemps_ridley: DEFAULT_MAX_SPEED_MS,
	hawksbill: DEFAULT_MAX_SPEED_MS,
	leatherback: DEFAULT_MAX_SPEED_MS,
	olive_ridley: DEFAULT_MAX_SPEED_MS,
	flatback: DEFAULT_MAX_SPEED_MS
};

export interface RecomputeResult {
	raw: number;
	kept: number;
	rejected: number;
	/** whether a public journey exists (the patient has a completed release) */
	published: boolean;
	distanceMetres: number;
	waypointSteps: number[];
	lastSignal: boolean;
}

/** Makes sure a patient has a tracking profile (defaults) and returns it. */
export async function ensureTrackingProfile(tx: Executor, patientId: string) {
	await tx.insert(trackingProfiles).values({ patientId }).onConflictDoNothing();
	const [profile] = await tx
		.select()
		.from(trackingProfiles)
		.where(eq(trackingProfiles.patientId, patientId));
	return profile;
}

async function trackingSettings(tx: Executor) {
	const [row] = await tx
		.select({
			waypointStepKm: organisationSettings.waypointStepKm,
			silenceDays: organisationSettings.silenceDays,
			inlandMetres: organisationSettings.inlandMetres
		})
		.from(organisationSettings);
	return row ?? { waypointStepKm: 500, silenceDays: 30, inlandMetres: 5000 };
}

/** The release that starts the public journey: the latest completed one. */
async function completedRelease(tx: Executor, patientId: string) {
	const [row] = await tx
		.select({ id: releases.id, releaseOn: releases.releaseOn })
		.from(releases)
		.where(and(eq(releases.patientId, patientId), isNotNull(releases.doneAt)))
		.orderBy(desc(releases.releaseOn))
		.limit(1);
	return row ?? null;
}

/** Writes the cleaning verdicts that changed, 5,000 rows per statement (one array per column). */
async function storeVerdicts(
	tx: Executor,
	verdicts: Array<{
		id: number;
		status: 'kept' | 'rejected';
		reason: string | null;
		detail: string | null;
	}>
): Promise<void> {
	for (let i = 0; i < verdicts.length; i += 5000) {
		const chunk = verdicts.slice(i, i + 5000);
		await tx.execute(sql`
			UPDATE ${positions} AS p
			SET status = v.status, reject_reason = v.reason, reject_detail = v.detail
			FROM unnest(
				${sql.param(chunk.map((v) => v.id))}::bigint[],
				${sql.param(chunk.map((v) => v.status))}::text[],
				${sql.param(chunk.map((v) => v.reason))}::text[],
				${sql.param(chunk.map((v) => v.detail))}::text[]) AS v(id, status, reason, detail)
			WHERE p.id = v.id
				AND (p.status IS DISTINCT FROM v.status
					OR p.reject_reason IS DISTINCT FROM v.reason
					OR p.reject_detail IS DISTINCT FROM v.detail)`);
	}
}

/**
 * Cleans the patient's whole track again and stores everything that follows from it. `now` is
 * the instant the public cutoff is measured from.
 */
export async function recomputeJourney(
	tx: Executor,
	patientId: string,
	now: number = Date.now()
): Promise<RecomputeResult> {
	const [patient] = await tx
		.select({
			id: patients.id,
			species: patients.species,
			status: patients.status,
			publicTreatment: patients.publicTreatment
		})
		.from(patients)
		.where(eq(patients.id, patientId))
		.for('update'); // one computation per patient at a time, across instances
	if (!patient) throw new Error(`No patient ${patientId}`);
	const profile = await ensureTrackingProfile(tx, patientId);
	const settings = await trackingSettings(tx);

	const rows = await tx
		.select({
			id: positions.id,
			time: positions.observedAt,
			lat: positions.latitude,
			lon: positions.longitude,
			lc: positions.locationClass
		})
		.from(positions)
		.where(eq(positions.patientId, patientId));
	const fixes: Fix[] = rows.map((r) => ({
		id: String(r.id),
		time: r.time.getTime(),
		lat: r.lat,
		lon: r.lon,
		lc: r.lc
	}));

	// The land mask is loaded (once per process) only when there is something to clean.
	const landFilter = fixes.length
		? landFilterFor(await loadLandMask({ inlandMetres: settings.inlandMetres }))
		: undefined;
	const { kept, rejected, legMetres } = cleanTrack(fixes, {
		minimumClass: profile.minimumClass,
		maxSpeedMs: profile.maxSpeedMs ?? SPECIES_MAX_SPEED_MS[patient.species],
		landFilter
	});
	await storeVerdicts(tx, [
		...kept.map((f) => ({ id: Number(f.id), status: 'kept' as const, reason: null, detail: null })),
		...rejected.map((r) => ({
			id: Number(r.fix.id),
			status: 'rejected' as const,
			reason: r.reason,
			detail: r.detail
		}))
	]);

	let lastFixAt: number | null = null;
	for (const fix of fixes) if (lastFixAt === null || fix.time > lastFixAt) lastFixAt = fix.time;
	const silent = transmitterSilent(lastFixAt, now, settings.silenceDays);
	// Automatic milestones go only to patients shown normally (never for one that died).
	const announces = patient.status === 'released' && patient.publicTreatment === 'shown';

	const release = await completedRelease(tx, patientId);
	let distanceMetres = 0;
	const waypointSteps: number[] = [];
	// A journey is published once the patient is released with a transmitter that has spoken.
	if (release && fixes.length > 0) {
		const journey = publicProjection(kept, {
			now,
			delayDays: profile.delayDays,
			cellDeg: Number(profile.cellDeg) as CellDeg,
			releasedAt: Date.parse(`${release.releaseOn}T00:00:00Z`),
			// the leg lengths the speed filter already measured with the geodesic library
			legMetres
		});
		distanceMetres = journey.distanceMetres;
		const geojson = toGeoJSON(journey);
		const etag = strongEtag(JSON.stringify(geojson));
		await tx
			.insert(journeys)
			.values({ patientId, geojson: { ...geojson }, etag, cutoffDate: journey.cutoffDate })
			.onConflictDoUpdate({
				target: journeys.patientId,
				set: {
					geojson: { ...geojson },
					etag,
					cutoffDate: journey.cutoffDate,
					computedAt: new Date()
				}
			});
		if (announces) {
			const stepMetres = settings.waypointStepKm * 1000;
			for (const step of crossedSteps(profile.publicDistanceMetres, distanceMetres, stepMetres)) {
				const thresholdKm = step * settings.waypointStepKm;
				const inserted = await tx
					.insert(patientEvents)
					.values({
						patientId,
						kind: 'waypoint',
						dedupeKey: `waypoint:${patientId}:${thresholdKm}km`,
						payload: {
							thresholdKm,
							distanceKm: geojson.properties.distanceKm,
							distanceMi: geojson.properties.distanceMi,
							cutoffDate: journey.cutoffDate,
							daysSinceRelease: Math.floor(
								(Date.parse(`${journey.cutoffDate}T00:00:00Z`) -
									Date.parse(`${release.releaseOn}T00:00:00Z`)) /
									DAY_MS
							)
						}
					})
					.onConflictDoNothing({ target: patientEvents.dedupeKey })
					.returning({ id: patientEvents.id });
				if (inserted.length) waypointSteps.push(step);
			}
		}
	} else {
		await tx.delete(journeys).where(eq(journeys.patientId, patientId));
	}

	if (silent && lastFixAt !== null && announces) {
		await tx
			.insert(patientEvents)
			.values({
				patientId,
				kind: 'last_signal',
				// One per silence: a transmitter that speaks again and falls silent later counts anew.
				dedupeKey: `last_signal:${patientId}:${utcDate(lastFixAt)}`,
				// Dates only, and only once the delay has passed: the payload may reach supporters.
				payload: { silenceDays: settings.silenceDays }
			})
			.onConflictDoNothing({ target: patientEvents.dedupeKey });
	}

	await tx
		.update(trackingProfiles)
		.set({
			computedAt: new Date(now),
			rawCount: fixes.length,
			keptCount: kept.length,
			rejectedCount: rejected.length,
			lastFixAt: lastFixAt === null ? null : new Date(lastFixAt),
			silentSince: silent && lastFixAt !== null ? new Date(lastFixAt) : null,
			publicDistanceMetres: Math.max(profile.publicDistanceMetres, distanceMetres),
			updatedAt: new Date()
		})
		.where(eq(trackingProfiles.patientId, patientId));

	return {
		raw: fixes.length,
		kept: kept.length,
		rejected: rejected.length,
		published: release !== null && fixes.length > 0,
		distanceMetres,
		waypointSteps,
		lastSignal: silent
	};
}
