// Map data shared by the browser components and the server. Nothing here may import server code:
// the public journey shape is a copy of the one in $lib/server/tracking/projection.ts, and
// types.test.ts fails to type-check when the two drift apart.
import type { FeatureCollection, LineString, MultiLineString, Point } from 'geojson';

export type Position = [number, number];

/** Public grid cell size in degrees (projection.ts `CellDeg`). */
export type CellDeg = 0.1 | 0.25 | 0.5 | 1;

export interface JourneyLineFeature {
	type: 'Feature';
	geometry:
		| { type: 'LineString'; coordinates: Position[] }
		| { type: 'MultiLineString'; coordinates: Position[][] };
	properties: { kind: 'track' };
}

export interface JourneyPointFeature {
	type: 'Feature';
	geometry: { type: 'Point'; coordinates: Position };
	properties: { kind: 'cell'; firstDate: string; lastDate: string };
}

/** The public projection as GeoJSON: coarse cell centres and dates only. */
export interface JourneyGeoJSON {
	type: 'FeatureCollection';
	/** Foreign member (RFC 7946 §6.1): summary of the journey. */
	properties: {
		distanceKm: number;
		distanceMi: number;
		cellDeg: CellDeg;
		delayDays: number;
		cutoffDate: string;
		lastPublicDate: string | null;
	};
	features: Array<JourneyLineFeature | JourneyPointFeature>;
}

export type LocationClassCode = 'G' | '3' | '2' | '1' | '0' | 'A' | 'B' | 'Z';

export interface StaffFixProperties {
	id: string;
	/** ISO 8601, UTC */
	time: string;
	lc: LocationClassCode;
	status: 'kept' | 'rejected';
	/** reject reason code, e.g. 'speed' */
	reason: string | null;
	detail: string | null;
	/** From the location class table or the file; a circle is drawn when known. */
	errorRadiusM: number | null;
}

/** Staff only: exact fixes and times. Never hand this to a public page. */
export interface StaffTrackMapData {
	fixes: FeatureCollection<Point, StaffFixProperties>;
	cleaned: FeatureCollection<LineString | MultiLineString>;
	/** The public projection, drawn as cells so staff see what the public sees. */
	journey: JourneyGeoJSON;
}
