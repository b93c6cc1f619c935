/**
 * Satellite location classes and their published error radii.
 *
 * Source, pinned edition: CLS, *Argos User's Manual*, online edition © 2007–2016 (last updated
 * 2016), §3.4 "Location classes": class 3 < 250 m; 2: 250–500 m; 1: 500–1500 m; 0: > 1500 m;
 * A and B: no accuracy estimate (A from 3 messages, B from 1–2); Z: invalid location.
 * Earlier editions quoted 150 / 350 / 1000 m for classes 3 / 2 / 1; do not mix the two.
 * GPS fixes (class G, not an Argos class) are taken as < 100 m.
 */
import { LOCATION_CLASSES, type LocationClass } from './types';

export { LOCATION_CLASSES, type LocationClass };

export interface ErrorRadius {
	/** lower bound of the 1-sigma error radius, metres */
	minM: number;
	/** upper bound, metres; null = unbounded (class 0) */
	maxM: number | null;
}

export interface LocationClassInfo {
	lc: LocationClass;
	label: string;
	/** null when the system gives no estimate (A, B) or the fix is invalid (Z) */
	errorRadius: ErrorRadius | null;
	valid: boolean;
}

export const LOCATION_CLASS_INFO: Readonly<Record<LocationClass, LocationClassInfo>> = {
	G: { lc: 'G', label: 'GPS, under 100 m', errorRadius: { minM: 0, maxM: 100 }, valid: true },
	'3': { lc: '3', label: 'Class 3, under 250 m', errorRadius: { minM: 0, maxM: 250 }, valid: true },
	'2': {
		lc: '2',
		label: 'Class 2, 250–500 m',
		errorRadius: { minM: 250, maxM: 500 },
		valid: true
	},
	'1': {
		lc: '1',
		label: 'Class 1, 500–1500 m',
		errorRadius: { minM: 500, maxM: 1500 },
		valid: true
	},
	'0': {
		lc: '0',
		label: 'Class 0, over 1500 m',
		errorRadius: { minM: 1500, maxM: null },
		valid: true
	},
	A: { lc: 'A', label: 'Class A, no estimate (3 messages)', errorRadius: null, valid: true },
	B: { lc: 'B', label: 'Class B, no estimate (1–2 messages)', errorRadius: null, valid: true },
	Z: { lc: 'Z', label: 'Class Z, invalid location', errorRadius: null, valid: false }
};

const RANK: ReadonlyMap<string, number> = new Map(LOCATION_CLASSES.map((lc, i) => [lc, i]));

export function isLocationClass(value: unknown): value is LocationClass {
	return typeof value === 'string' && RANK.has(value);
}

/** 0 for the best class (G), increasing as quality falls; Z is last. */
export function classRank(lc: LocationClass): number {
	const rank = RANK.get(lc);
	if (rank === undefined) throw new RangeError(`unknown location class "${String(lc)}"`);
	return rank;
}

/** Negative when a is better than b, positive when worse, 0 when equal. */
export function compareClass(a: LocationClass, b: LocationClass): number {
	return classRank(a) - classRank(b);
}

/** True when `lc` is at least as good as `minimum`. Class Z never meets any minimum. */
export function meetsMinimum(lc: LocationClass, minimum: LocationClass): boolean {
	if (lc === 'Z') return false;
	return classRank(lc) <= classRank(minimum);
}

export function errorRadius(lc: LocationClass): ErrorRadius | null {
	return LOCATION_CLASS_INFO[lc].errorRadius;
}
