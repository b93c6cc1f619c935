// The staff map's data: every raw fix with its verdict, the cleaned line and the public cells.
// Staff only: it holds exact positions and times.
import type { StaffTrackMapData, JourneyGeoJSON } from '$lib/map/types';
import { errorRadius } from '../tracking/classes';
import { splitAtAntimeridian } from '../tracking/projection';
import type { LocationClass } from '../tracking/types';
import type { StaffTrackRow } from './exports';

const EMPTY_JOURNEY: JourneyGeoJSON = {
	type: 'FeatureCollection',
	properties: {
		distanceKm: 0,
		distanceMi: 0,
		cellDeg: 0.1,
		delayDays: 7,
		cutoffDate: '',
		lastPublicDate: null
	},
	features: []
};

/**
 * The radius drawn around a fix: the file's own error radius or semi-major axis when it gave
 * one, else the upper bound of its class's 1-sigma radius from the Argos user's manual (none for
 * classes 0, A, B and Z, whose error is unbounded or not estimated).
 */
function radiusFor(row: StaffTrackRow): number | null {
	if (row.errorRadiusM !== null) return row.errorRadiusM;
	if (row.semiMajorM !== null) return row.semiMajorM;
	return errorRadius(row.locationClass as LocationClass)?.maxM ?? null;
}

export function staffMapData(
	rows: readonly StaffTrackRow[],
	journey: Record<string, unknown> | null
): StaffTrackMapData {
	const kept = rows.filter((r) => r.status === 'kept');
	// Unsnapped positions: split with a cell of 0.1° only to find the crossings; the kink at the
	// cut is at most 0.05°, invisible at the staff map's scale.
	const parts = splitAtAntimeridian(
		kept.map((r) => [r.longitude, r.latitude] as [number, number]),
		0.1
	);
	return {
		fixes: {
			type: 'FeatureCollection',
			features: rows.map((r) => ({
				type: 'Feature',
				geometry: { type: 'Point', coordinates: [r.longitude, r.latitude] },
				properties: {
					id: String(r.id),
					time: r.observedAt.toISOString(),
					lc: r.locationClass as LocationClass,
					status: r.status === 'kept' ? 'kept' : 'rejected',
					reason: r.rejectReason,
					detail: r.rejectDetail,
					errorRadiusM: radiusFor(r)
				}
			}))
		},
		cleaned: {
			type: 'FeatureCollection',
			features:
				kept.length >= 2
					? [
							{
								type: 'Feature',
								properties: {},
								geometry:
									parts.length === 1
										? { type: 'LineString', coordinates: parts[0] }
										: { type: 'MultiLineString', coordinates: parts }
							}
						]
					: []
		},
		journey: (journey as unknown as JourneyGeoJSON | null) ?? EMPTY_JOURNEY
	};
}
