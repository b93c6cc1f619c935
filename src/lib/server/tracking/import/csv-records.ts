/**
 * Turns the CSV reader's records (arrays of cell strings) into `ParseItem`s. The columns are
 * looked up once from the header; a row whose every value is plainly good is converted here
 * without building `checkRow`'s input, and any other row goes through `checkRow` whole, so the
 * problems found and their messages are the ones the other readers give.
 */
import { LOCATION_CLASSES, type LocationClass } from '../classes';
import type { CsvMapping, MappingField, ParseItem, ParsedPosition, RowProblem } from './types';
import {
	checkRow,
	decimalOrNaN,
	EARLIEST_TIME,
	FUTURE_TOLERANCE_MS,
	parseTimestamp,
	utcTimestampFast,
	type FieldValue,
	type RowInput,
	type RowRules
} from './values';

/** The cell spellings of each class read without trimming; others go through `checkRow`. */
const CLASS_CELLS: ReadonlyMap<string, LocationClass> = new Map(
	LOCATION_CLASSES.flatMap((lc) => [
		[lc, lc],
		[lc.toLowerCase(), lc]
	])
);

/** A record: its cells, and the line in the file where it starts (from 1). */
export type CsvRowReader = (fields: readonly string[], line: number) => ParseItem;

/**
 * Reads rows of a file with these `headers` (trimmed, as in the header row), the columns chosen
 * in `mapping` (already checked against the headers by `validateMapping`).
 */
export function csvRowReader(
	headers: readonly string[],
	mapping: CsvMapping,
	rules: RowRules
): CsvRowReader {
	const index = (field: MappingField): number => {
		const column = mapping[field];
		return column === undefined ? -1 : headers.indexOf(column);
	};
	const width = headers.length;
	const time = index('time');
	const lat = index('lat');
	const lon = index('lon');
	const lc = index('lc');
	const semiMajor = index('semiMajorM');
	const semiMinor = index('semiMinorM');
	const orientation = index('orientationDeg');
	const errorRadius = index('errorRadiusM');
	const latest = rules.now + FUTURE_TOLERANCE_MS;
	const { defaultClass } = rules;

	const field = (fields: readonly string[], i: number): FieldValue | null =>
		i < 0 ? null : { column: headers[i], value: fields[i] ?? '' };

	/** Every row the fast path does not take: the same input `checkRow` always had. */
	function general(fields: readonly string[], line: number): ParseItem {
		const extra = fields.slice(width).findIndex((cell) => cell !== '');
		const problems: RowProblem[] =
			extra >= 0
				? [
						{
							row: line,
							column: '',
							message: `This row has ${fields.length} fields but the header names ${width} columns; check the separators and quotes.`
						}
					]
				: [];
		const input: RowInput = {
			row: line,
			time: field(fields, time),
			lat: field(fields, lat),
			lon: field(fields, lon),
			lc: field(fields, lc),
			semiMajorM: field(fields, semiMajor),
			semiMinorM: field(fields, semiMinor),
			orientationDeg: field(fields, orientation),
			errorRadiusM: field(fields, errorRadius),
			problems
		};
		return checkRow(input, rules);
	}

	/** An optional cell: null when empty, NaN when `checkRow` must look at it. */
	const optional = (fields: readonly string[], i: number): number | null => {
		if (i < 0) return null;
		const cell = fields[i] ?? '';
		if (cell === '') return null;
		const value = decimalOrNaN(cell);
		return value >= 0 ? value : NaN;
	};

	return (fields, line) => {
		for (let i = width; i < fields.length; i++) {
			if (fields[i] !== '') return general(fields, line);
		}

		const timeCell = fields[time] ?? '';
		let ms = utcTimestampFast(timeCell);
		if (ms !== ms) {
			const parsed = timeCell === '' ? null : parseTimestamp(timeCell);
			if (parsed === null || !parsed.ok) return general(fields, line);
			ms = parsed.value;
		}
		if (ms < EARLIEST_TIME || ms > latest) return general(fields, line);

		const latValue = decimalOrNaN(fields[lat] ?? '');
		if (!(latValue >= -90 && latValue <= 90)) return general(fields, line);
		const lonValue = decimalOrNaN(fields[lon] ?? '');
		if (!(lonValue >= -180 && lonValue <= 180)) return general(fields, line);

		let lcValue: LocationClass | undefined;
		const lcCell = lc < 0 ? '' : (fields[lc] ?? '');
		if (lcCell === '') lcValue = defaultClass;
		else lcValue = CLASS_CELLS.get(lcCell);
		if (lcValue === undefined) return general(fields, line);

		const semiMajorM = optional(fields, semiMajor);
		const semiMinorM = optional(fields, semiMinor);
		const orientationDeg = optional(fields, orientation);
		const errorRadiusM = optional(fields, errorRadius);
		if (
			semiMajorM !== semiMajorM ||
			semiMinorM !== semiMinorM ||
			orientationDeg !== orientationDeg ||
			errorRadiusM !== errorRadiusM ||
			(orientationDeg !== null && orientationDeg > 180) ||
			(semiMajorM !== null && semiMinorM !== null && semiMinorM > semiMajorM)
		) {
			return general(fields, line);
		}

		const position: ParsedPosition = {
			row: line,
			time: ms,
			lat: latValue,
			lon: lonValue,
			lc: lcValue,
			semiMajorM,
			semiMinorM,
			orientationDeg,
			errorRadiusM
		};
		return { ok: true, position };
	};
}
