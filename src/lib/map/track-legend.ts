// Words and colours for the staff track map, shared by the map and its HTML legend. Type-only
// imports keep the server's tracking code out of the browser while these Records still fail to
// compile when a class or reject reason is added there without a label here.
import type { LocationClass, RejectReason } from '$lib/server/tracking/types';

/** Best first, as the location class table orders them. */
export const CLASS_ORDER: readonly LocationClass[] = ['G', '3', '2', '1', '0', 'A', 'B', 'Z'];

/**
 * One hue per class, all dark or saturated enough to stand out on the pale sea and sand. Colour
 * is not the only cue: the legend names each class, and each fix's popup states it.
 */
export const CLASS_COLOURS: Readonly<Record<LocationClass, string>> = {
	G: '#1b7a6e', // teal
	'3': '#2e6fb7', // blue
	'2': '#4f9a2a', // green
	'1': '#6a4c9c', // violet
	'0': '#c8428f', // magenta
	A: '#d97706', // orange
	B: '#7c4a1e', // brown
	Z: '#b91c1c' // red
};

export const CLASS_LABELS: Readonly<Record<LocationClass, string>> = {
	G: 'GPS (under 100 m)',
	'3': 'Class 3 (under 250 m)',
	'2': 'Class 2 (250–500 m)',
	'1': 'Class 1 (500–1500 m)',
	'0': 'Class 0 (over 1500 m)',
	A: 'Class A (no estimate)',
	B: 'Class B (no estimate)',
	Z: 'Class Z (invalid)'
};

export const REJECT_REASON_LABELS: Readonly<Record<RejectReason, string>> = {
	invalid_class: 'Invalid class',
	below_minimum_class: 'Below the minimum class',
	duplicate: 'Duplicate',
	same_time_conflict: 'Two positions at one time',
	speed: 'Implausible speed',
	on_land: 'On land',
	invalid_coordinates: 'Invalid coordinates'
};

/** A reason code in words; an unknown code is shown as it is. */
export function rejectReasonLabel(code: string | null): string {
	if (!code) return '';
	return (REJECT_REASON_LABELS as Record<string, string>)[code] ?? code;
}

/** '2025-06-01T12:34:56.000Z' → '2025-06-01 12:34 UTC'; anything else is shown unchanged. */
export function formatFixTime(iso: string): string {
	const date = new Date(iso);
	if (Number.isNaN(date.getTime())) return iso;
	return `${date.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}
