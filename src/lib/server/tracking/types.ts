export const LOCATION_CLASSES = ['G', '3', '2', '1', '0', 'A', 'B', 'Z'] as const; // best first
export type LocationClass = (typeof LOCATION_CLASSES)[number];
export interface Fix {
	id: string;
	time: number /* ms since epoch, UTC */;
	lat: number;
	lon: number;
	lc: LocationClass;
}
export type RejectReason =
	| 'invalid_class'
	| 'below_minimum_class'
	| 'duplicate'
	| 'same_time_conflict'
	| 'speed'
	| 'on_land'
	| 'invalid_coordinates';
export interface Rejected {
	fix: Fix;
	reason: RejectReason;
	detail: string;
}
