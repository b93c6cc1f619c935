/**
 * Which column (CSV) or property (GeoJSON, GPX extensions) holds which field, recognised by
 * name. Names are compared after `normaliseName`, so "Date Time", "date_time" and "DATETIME"
 * are the same, and a unit in brackets ("Error radius (m)") is ignored.
 */
import { isLocationClass, LOCATION_CLASSES, type LocationClass } from '../classes';
import type { CsvMapping, MappingField } from './types';

export const MAPPING_FIELDS: readonly MappingField[] = [
	'time',
	'lat',
	'lon',
	'lc',
	'semiMajorM',
	'semiMinorM',
	'orientationDeg',
	'errorRadiusM'
];

export const FIELD_LABELS: Readonly<Record<MappingField, string>> = {
	time: 'time',
	lat: 'latitude',
	lon: 'longitude',
	lc: 'location class',
	semiMajorM: 'semi-major axis',
	semiMinorM: 'semi-minor axis',
	orientationDeg: 'ellipse orientation',
	errorRadiusM: 'error radius'
};

const withUnits = (names: string[], units: string[]) =>
	names.flatMap((name) => [name, ...units.map((unit) => name + unit)]);
const METRES = ['m', 'metres', 'meters'];

/**
 * Recognised names per field, normalised, best first. `hdop` is deliberately absent: it is a
 * unitless dilution of precision, not an error radius in metres.
 */
export const FIELD_ALIASES: Readonly<Record<MappingField, readonly string[]>> = {
	time: [
		'timestamp',
		'datetime',
		'time',
		'date',
		'utc',
		'timestamputc',
		'datetimeutc',
		'utcdatetime',
		'timeutc',
		'utctime',
		'dateutc'
	],
	lat: ['lat', 'latitude'],
	lon: ['lon', 'lng', 'long', 'longitude'],
	lc: ['lc', 'locationclass', 'class', 'quality', 'locclass'],
	semiMajorM: withUnits(
		['semimajor', 'semimajoraxis', 'errorsemimajoraxis', 'errorellipsesemimajoraxis'],
		METRES
	),
	semiMinorM: withUnits(
		['semiminor', 'semiminoraxis', 'errorsemiminoraxis', 'errorellipsesemiminoraxis'],
		METRES
	),
	orientationDeg: withUnits(
		['orientation', 'ellipseorientation', 'errorellipseorientation'],
		['deg', 'degrees']
	),
	errorRadiusM: withUnits(['errorradius', 'gpserrorradius'], METRES)
};

export function normaliseName(name: string): string {
	return name
		.replace(/\([^)]*\)|\[[^\]]*\]/g, '')
		.toLowerCase()
		.replace(/[^a-z0-9]+/g, '');
}

/** Normalised name → the first name with that normal form. */
export function indexNames(names: Iterable<string>): Map<string, string> {
	const index = new Map<string, string>();
	for (const name of names) {
		const normal = normaliseName(name);
		if (!index.has(normal)) index.set(normal, name);
	}
	return index;
}

/** The name in `index` recognised for `field`, the best alias first. */
export function lookupAlias(
	index: ReadonlyMap<string, string>,
	field: MappingField
): string | undefined {
	for (const alias of FIELD_ALIASES[field]) {
		const name = index.get(alias);
		if (name !== undefined) return name;
	}
	return undefined;
}

/** A mapping guessed from the header names; each column is suggested for at most one field. */
export function suggestMapping(headers: readonly string[]): Partial<CsvMapping> {
	const taken = new Set<string>();
	const suggested: Partial<CsvMapping> = {};
	for (const field of MAPPING_FIELDS) {
		const name = lookupAlias(indexNames(headers.filter((h) => !taken.has(h))), field);
		if (name !== undefined) {
			suggested[field] = name;
			taken.add(name);
		}
	}
	return suggested;
}

export type MappingErrors = Partial<Record<MappingField | 'defaultClass', string>>;

/**
 * Checks a mapping chosen by a person against the file's header names. An empty string counts
 * as "not chosen". `defaultClass` may come straight from a form, so it is checked too.
 */
export function validateMapping(
	headers: readonly string[],
	mapping: Partial<Record<MappingField, string | null | undefined>>,
	defaultClass?: LocationClass | string | null
):
	| { ok: true; mapping: CsvMapping; defaultClass?: LocationClass }
	| { ok: false; errors: MappingErrors } {
	const errors: MappingErrors = {};
	const known = new Set(headers);
	const usedBy = new Map<string, MappingField>();
	const chosen: Partial<CsvMapping> = {};
	for (const field of MAPPING_FIELDS) {
		const column = mapping[field]?.trim();
		if (!column) {
			if (field === 'time' || field === 'lat' || field === 'lon') {
				errors[field] = `Choose the column that holds the ${FIELD_LABELS[field]}.`;
			}
			continue;
		}
		if (!known.has(column)) {
			errors[field] = `There is no column named “${column}” in this file.`;
			continue;
		}
		const other = usedBy.get(column);
		if (other !== undefined) {
			errors[field] = `Column “${column}” is already used for the ${FIELD_LABELS[other]}.`;
			continue;
		}
		usedBy.set(column, field);
		chosen[field] = column;
	}
	let lcDefault: LocationClass | undefined;
	const rawDefault = defaultClass?.trim().toUpperCase();
	if (rawDefault) {
		if (isLocationClass(rawDefault)) lcDefault = rawDefault;
		else {
			errors.defaultClass = `“${defaultClass}” is not a location class; choose one of ${LOCATION_CLASSES.join(', ')}.`;
		}
	}
	if (!mapping.lc?.trim() && !rawDefault) {
		errors.lc =
			'Choose the column that holds the location class, or a default class for every row.';
	}
	if (Object.keys(errors).length > 0) return { ok: false, errors };
	const { time, lat, lon } = chosen;
	if (time === undefined || lat === undefined || lon === undefined) return { ok: false, errors };
	return {
		ok: true,
		mapping: { ...chosen, time, lat, lon },
		...(lcDefault ? { defaultClass: lcDefault } : {})
	};
}
