/**
 * Row validation shared by the CSV, GeoJSON and GPX readers: one position's raw values in, a
 * position or the list of its problems out.
 */
import { isLocationClass, LOCATION_CLASSES, type LocationClass } from '../classes';
import type { ParseItem, ParsedPosition, RowProblem } from './types';

/**
 * Plausibility rule, not a physical limit: the Argos system began operating in 1978, so a fix
 * dated earlier is a typing or format mistake (a day/month swap, a two-digit year, an epoch 0).
 */
export const EARLIEST_TIME = Date.UTC(1978, 0, 1);

/** Loggers' and exporters' clocks drift; a fix a few minutes "ahead" of the server is accepted. */
export const FUTURE_TOLERANCE_MS = 10 * 60_000;

const CLASS_LIST = LOCATION_CLASSES.join(', ');

/** How a value is shown inside a message: quoted, and cut short when long. */
export function quote(value: unknown): string {
	const text = typeof value === 'string' ? value : JSON.stringify(value);
	return `“${text.length > 40 ? `${text.slice(0, 40)}…` : text}”`;
}

type Result<T> = { ok: true; value: T } | { ok: false; message: string };

const TIMESTAMP =
	/^(\d{4})([-/])(\d{2})\2(\d{2})(?:([T ])(\d{2}):(\d{2})(?::(\d{2})(?:[.,](\d+))?)?\s*(Z|UTC|[+-]\d{2}(?::?\d{2})?)?)?$/i;

function daysInMonth(year: number, month: number): number {
	if (month === 2) return (year % 4 === 0 && year % 100 !== 0) || year % 400 === 0 ? 29 : 28;
	return month === 4 || month === 6 || month === 9 || month === 11 ? 30 : 31;
}

const CHAR_0 = 48;

/** Two decimal digits at `at`, or -1. `text` must be long enough. */
function twoDigits(text: string, at: number): number {
	const tens = text.charCodeAt(at) - CHAR_0;
	const units = text.charCodeAt(at + 1) - CHAR_0;
	return tens >= 0 && tens <= 9 && units >= 0 && units <= 9 ? tens * 10 + units : -1;
}

/**
 * The common exported forms read without the regular expression: `YYYY-MM-DDTHH:MM:SSZ`,
 * `YYYY-MM-DD HH:MM:SS` (zone-less, so a space only), optionally with `Z` after a space and with
 * three fraction digits (`.sssZ`, as `toISOString` writes). ms since epoch, or NaN for anything
 * else, including dates that do not exist; `parseTimestamp` then decides, with its messages.
 * Years before 100 are left to it too: `Date.UTC` would read them as 19xx.
 */
export function utcTimestampFast(text: string): number {
	const length = text.length;
	if (length < 19 || length > 24) return NaN;
	let zone = false;
	let end = length;
	const last = text.charCodeAt(length - 1);
	if (last === 90 /* Z */ || last === 122 /* z */) {
		zone = true;
		end--;
	}
	let ms = 0;
	if (end === 23) {
		if (text.charCodeAt(19) !== 46 /* . */) return NaN;
		const hundreds = text.charCodeAt(20) - CHAR_0;
		const rest = twoDigits(text, 21);
		if (hundreds < 0 || hundreds > 9 || rest < 0) return NaN;
		ms = hundreds * 100 + rest;
	} else if (end !== 19) return NaN;
	const sep = text.charCodeAt(10);
	if (sep !== 32 /* space */ && !(zone && (sep === 84 /* T */ || sep === 116) /* t */)) return NaN;
	if (
		text.charCodeAt(4) !== 45 /* - */ ||
		text.charCodeAt(7) !== 45 ||
		text.charCodeAt(13) !== 58 /* : */ ||
		text.charCodeAt(16) !== 58
	) {
		return NaN;
	}
	const century = twoDigits(text, 0);
	const yearOf = twoDigits(text, 2);
	const month = twoDigits(text, 5);
	const day = twoDigits(text, 8);
	const hour = twoDigits(text, 11);
	const minute = twoDigits(text, 14);
	const second = twoDigits(text, 17);
	if (century < 1 || yearOf < 0) return NaN;
	const year = century * 100 + yearOf;
	if (
		month < 1 ||
		month > 12 ||
		day < 1 ||
		day > daysInMonth(year, month) ||
		hour < 0 ||
		hour > 23 ||
		minute < 0 ||
		minute > 59 ||
		second < 0 ||
		second > 59
	) {
		return NaN;
	}
	return Date.UTC(year, month - 1, day, hour, minute, second, ms);
}

const READABLE_FORMS =
	'use ISO 8601 such as 2024-03-01T12:00:00Z or 2024-03-01T14:00:00+02:00, or 2024-03-01 12:00:00 (read as UTC)';

/**
 * Accepted: ISO 8601 / RFC 3339 with `Z` or an offset (converted to UTC), and
 * `YYYY-MM-DD HH:MM:SS` or `YYYY/MM/DD HH:MM:SS` without a zone, which are read as UTC.
 * Seconds and fractions are optional. `2024-03-01T12:00:00` (ISO with `T` but no zone) is refused:
 * ISO 8601 reads it as local time, and we cannot know whose.
 */
export function parseTimestamp(raw: string): Result<number> {
	const text = raw.trim();
	const fast = utcTimestampFast(text);
	if (fast === fast) return { ok: true, value: fast };
	const m = TIMESTAMP.exec(text);
	if (!m) {
		if (/^\d{9,13}(\.\d+)?$/.test(text)) {
			return {
				ok: false,
				message: `${quote(text)} looks like a Unix time number; ${READABLE_FORMS}.`
			};
		}
		return { ok: false, message: `${quote(text)} is not a time we can read; ${READABLE_FORMS}.` };
	}
	const [, y, , mo, d, sep, hh, mi, ss, frac, zone] = m;
	if (sep === undefined) {
		return { ok: false, message: `${quote(text)} has a date but no time of day.` };
	}
	if (sep.toUpperCase() === 'T' && zone === undefined) {
		return {
			ok: false,
			message: `${quote(text)} has no time zone; add Z for UTC or an offset such as +02:00.`
		};
	}
	const year = Number(y);
	const month = Number(mo);
	const day = Number(d);
	const hour = Number(hh);
	const minute = Number(mi);
	const second = ss === undefined ? 0 : Number(ss);
	const ms = frac === undefined ? 0 : Number(frac.slice(0, 3).padEnd(3, '0'));
	if (
		month < 1 ||
		month > 12 ||
		day < 1 ||
		day > daysInMonth(year, month) ||
		hour > 23 ||
		minute > 59 ||
		second > 59
	) {
		return { ok: false, message: `${quote(text)} is not a real date and time.` };
	}
	let offsetMinutes = 0;
	if (zone !== undefined && /^[+-]/.test(zone)) {
		const digits = zone.slice(1).replace(':', '');
		const oh = Number(digits.slice(0, 2));
		const om = digits.length > 2 ? Number(digits.slice(2, 4)) : 0;
		if (oh > 14 || om > 59 || (oh === 14 && om > 0)) {
			return { ok: false, message: `${quote(text)} has a time zone offset beyond ±14:00.` };
		}
		offsetMinutes = (zone.startsWith('-') ? -1 : 1) * (oh * 60 + om);
	}
	const date = new Date(0);
	date.setUTCFullYear(year, month - 1, day);
	date.setUTCHours(hour, minute, second, ms);
	return { ok: true, value: date.getTime() - offsetMinutes * 60_000 };
}

const DECIMAL = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * `text` (untrimmed) as `parseDecimal` would read it when it is a plain finite decimal, or NaN
 * for anything else (spaces, commas, too large…), which `parseDecimal` then explains.
 */
export function decimalOrNaN(text: string): number {
	if (!DECIMAL.test(text)) return NaN;
	const value = Number(text);
	return value - value === 0 ? value : NaN;
}

/** A plain decimal number with a decimal point. `NaN`, `Infinity`, hex and `12,5` are refused. */
export function parseDecimal(raw: string): Result<number> {
	const text = raw.trim();
	if (DECIMAL.test(text)) {
		const value = Number(text);
		if (Number.isFinite(value)) return { ok: true, value };
		return { ok: false, message: `${quote(text)} is too large.` };
	}
	if (/^[+-]?\d*,\d+$/.test(text)) {
		return {
			ok: false,
			message: `${quote(text)} uses a decimal comma; use a decimal point (${text.replace(',', '.')}).`
		};
	}
	if (text.includes(',')) {
		return {
			ok: false,
			message: `${quote(text)} is not a number; use a decimal point and no thousands separators.`
		};
	}
	return { ok: false, message: `${quote(text)} is not a number.` };
}

/** Location class, trimmed and case-insensitive: `a` and ` A ` are class A. */
export function parseLocationClass(raw: string): Result<LocationClass> {
	const text = raw.trim().toUpperCase();
	if (isLocationClass(text)) return { ok: true, value: text };
	return {
		ok: false,
		message: `${quote(raw.trim())} is not a location class; expected one of ${CLASS_LIST}.`
	};
}

/** One raw value and where it came from. `value` is a CSV cell, a JSON value or an XML text. */
export interface FieldValue {
	column: string;
	value: unknown;
	/** message when the value is absent or empty, instead of the generic one */
	absentMessage?: string;
}

/**
 * Raw values of one row. A required field (time, lat, lon) set to null was already reported by
 * the reader in `problems`; an optional one set to null is simply not in the file.
 */
export interface RowInput {
	row: number;
	time: FieldValue | null;
	lat: FieldValue | null;
	lon: FieldValue | null;
	/** null: the file gives no class for this row, so `defaultClass` applies */
	lc: FieldValue | null;
	semiMajorM: FieldValue | null;
	semiMinorM: FieldValue | null;
	orientationDeg: FieldValue | null;
	errorRadiusM: FieldValue | null;
	problems?: RowProblem[];
}

export interface RowRules {
	/** ms since epoch */
	now: number;
	defaultClass?: LocationClass;
}

function isAbsent(value: unknown): boolean {
	return (
		value === undefined || value === null || (typeof value === 'string' && value.trim() === '')
	);
}

/** JSON numbers are taken as they are; text goes through `parseDecimal`. */
function toNumber(value: unknown): Result<number> {
	if (typeof value === 'number') {
		return Number.isFinite(value)
			? { ok: true, value }
			: { ok: false, message: `${quote(String(value))} is not a finite number.` };
	}
	if (typeof value === 'string') return parseDecimal(value);
	return { ok: false, message: `${quote(value)} is not a number.` };
}

function formatUtc(time: number): string {
	return `${new Date(time).toISOString().slice(0, 19).replace('T', ' ')} UTC`;
}

export function checkRow(input: RowInput, rules: RowRules): ParseItem {
	const { row } = input;
	const problems: RowProblem[] = [...(input.problems ?? [])];
	const fail = (field: FieldValue, message: string) =>
		problems.push({ row, column: field.column, message });

	const required = (field: FieldValue | null, what: string): unknown => {
		if (field === null) return undefined;
		if (isAbsent(field.value)) {
			fail(field, field.absentMessage ?? `No ${what} given.`);
			return undefined;
		}
		return field.value;
	};

	let time: number | undefined;
	const rawTime = required(input.time, 'time');
	if (rawTime !== undefined && input.time) {
		if (typeof rawTime !== 'string') {
			fail(input.time, `${quote(rawTime)} is not a time; ${READABLE_FORMS}.`);
		} else {
			const parsed = parseTimestamp(rawTime);
			if (!parsed.ok) fail(input.time, parsed.message);
			else if (parsed.value < EARLIEST_TIME) {
				fail(
					input.time,
					`${quote(rawTime.trim())} is before 1 January 1978, the start of Argos satellite tracking; check the date.`
				);
			} else if (parsed.value > rules.now + FUTURE_TOLERANCE_MS) {
				fail(
					input.time,
					`${quote(rawTime.trim())} (${formatUtc(parsed.value)}) is in the future; times must be in UTC and not later than now.`
				);
			} else time = parsed.value;
		}
	}

	const coordinate = (
		field: FieldValue | null,
		name: string,
		limit: number,
		hint: (value: number) => string
	) => {
		const raw = required(field, name.toLowerCase());
		if (raw === undefined || !field) return undefined;
		const parsed = toNumber(raw);
		if (!parsed.ok) {
			fail(field, parsed.message);
			return undefined;
		}
		if (parsed.value < -limit || parsed.value > limit) {
			fail(field, `${name} ${parsed.value} is outside -${limit} to ${limit}${hint(parsed.value)}.`);
			return undefined;
		}
		return parsed.value;
	};
	const lat = coordinate(input.lat, 'Latitude', 90, () => '');
	const lon = coordinate(input.lon, 'Longitude', 180, (value) =>
		value > 180 && value <= 360
			? '; convert 0–360 longitudes by subtracting 360 from those over 180'
			: ''
	);

	let lc: LocationClass | undefined;
	if (input.lc === null || isAbsent(input.lc.value)) {
		if (rules.defaultClass) lc = rules.defaultClass;
		else {
			problems.push({
				row,
				column: input.lc?.column ?? 'lc',
				message:
					input.lc?.absentMessage ?? 'No location class given, and no default class was chosen.'
			});
		}
	} else if (typeof input.lc.value !== 'string') {
		fail(
			input.lc,
			`${quote(input.lc.value)} is not a location class; expected one of ${CLASS_LIST}.`
		);
	} else {
		const parsed = parseLocationClass(input.lc.value);
		if (parsed.ok) lc = parsed.value;
		else fail(input.lc, parsed.message);
	}

	const optional = (
		field: FieldValue | null,
		name: string,
		max: number | null
	): number | null | undefined => {
		if (field === null || isAbsent(field.value)) return null;
		const parsed = toNumber(field.value);
		if (!parsed.ok) {
			fail(field, parsed.message);
			return undefined;
		}
		if (parsed.value < 0) {
			fail(field, `${name} must not be negative (${parsed.value}).`);
			return undefined;
		}
		if (max !== null && parsed.value > max) {
			fail(field, `${name} ${parsed.value} is outside 0 to ${max} degrees.`);
			return undefined;
		}
		return parsed.value;
	};
	const semiMajorM = optional(input.semiMajorM, 'Semi-major axis', null);
	const semiMinorM = optional(input.semiMinorM, 'Semi-minor axis', null);
	const orientationDeg = optional(input.orientationDeg, 'Ellipse orientation', 180);
	const errorRadiusM = optional(input.errorRadiusM, 'Error radius', null);
	if (
		typeof semiMajorM === 'number' &&
		typeof semiMinorM === 'number' &&
		semiMinorM > semiMajorM &&
		input.semiMinorM
	) {
		fail(
			input.semiMinorM,
			`The semi-minor axis (${semiMinorM} m) is longer than the semi-major axis (${semiMajorM} m); are the columns swapped?`
		);
	}

	if (
		problems.length > 0 ||
		time === undefined ||
		lat === undefined ||
		lon === undefined ||
		lc === undefined ||
		semiMajorM === undefined ||
		semiMinorM === undefined ||
		orientationDeg === undefined ||
		errorRadiusM === undefined
	) {
		return { ok: false, row, problems };
	}
	const position: ParsedPosition = {
		row,
		time,
		lat,
		lon,
		lc,
		semiMajorM,
		semiMinorM,
		orientationDeg,
		errorRadiusM
	};
	return { ok: true, position };
}
