// Public reads of a journey. Everything here comes from the `journeys` table (the stored public
// projection) and public patient columns; never from `positions`.
import { and, eq, ne } from 'drizzle-orm';
import { db, type Executor } from '../db';
import { journeys, patients } from '../db/schema';
import type { JourneyGeoJSON } from '../tracking/projection';

export interface PublicJourneyRecord {
	patientId: string;
	geojson: JourneyGeoJSON;
	etag: string;
	cutoffDate: string;
}

/** The stored public journey of a visible patient, or null (unknown, hidden, or not released). */
export async function getPublicJourney(
	slug: string,
	executor: Executor = db()
): Promise<PublicJourneyRecord | null> {
	const [row] = await executor
		.select({
			patientId: journeys.patientId,
			geojson: journeys.geojson,
			etag: journeys.etag,
			cutoffDate: journeys.cutoffDate
		})
		.from(journeys)
		.innerJoin(patients, eq(patients.id, journeys.patientId))
		.where(and(eq(patients.slug, slug), ne(patients.publicTreatment, 'hidden')));
	if (!row) return null;
	return { ...row, geojson: row.geojson as unknown as JourneyGeoJSON };
}
