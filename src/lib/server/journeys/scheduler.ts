// The public cutoff moves every day, and a transmitter falls silent without anyone uploading:
// once a day each tracked patient's projection is computed again. Every instance runs this loop;
// recomputeJourney locks the patient row, and a patient already done today is skipped.
import { isNull, lt, or } from 'drizzle-orm';
import { db } from '../db';
import { startLoop, stopLoop } from '../loop';
import { clearPublicCache } from '../public-cache';
import { trackingProfiles } from '../db/schema';
import { recomputeJourney } from './recompute';

/** Recomputes every tracked patient not yet computed on today's UTC date; returns how many. */
export async function recomputeStaleJourneys(now: number = Date.now()): Promise<number> {
	const startOfDay = new Date(Math.floor(now / 86_400_000) * 86_400_000);
	const stale = await db()
		.select({ patientId: trackingProfiles.patientId })
		.from(trackingProfiles)
		.where(or(isNull(trackingProfiles.computedAt), lt(trackingProfiles.computedAt, startOfDay)));
	for (const { patientId } of stale) {
		await db().transaction((tx) => recomputeJourney(tx, patientId, now));
	}
	if (stale.length > 0) clearPublicCache();
	return stale.length;
}

export function startJourneyScheduler(
	intervalMs = Number(process.env.JOURNEY_SCHEDULER_MS ?? 3_600_000)
) {
	startLoop('journey scheduler', () => recomputeStaleJourneys(), intervalMs, { runNow: true });
}

export const stopJourneyScheduler = () => stopLoop('journey scheduler');
