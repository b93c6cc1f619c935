import type { LocationClass } from '../types';

export type ImportFormat = 'csv' | 'geojson' | 'gpx';

/** Column names (as written in the file's header row) for each field of a position. */
export interface CsvMapping {
	time: string;
	lat: string;
	lon: string;
	lc?: string;
	semiMajorM?: string;
	semiMinorM?: string;
	orientationDeg?: string;
	errorRadiusM?: string;
}

export type MappingField = keyof CsvMapping;

/**
 * Row numbers, as a person counts them in the file:
 * - CSV: the line in the file where the record starts; the header is line 1, so the first data
 *   row is row 2. Blank lines still count, so the number matches a text editor's line number.
 * - GeoJSON: the feature's position in `features`, starting at 1.
 * - GPX: the point's position among all `wpt` and `trkpt` elements in document order, from 1.
 */
export interface ParsedPosition {
	row: number;
	/** ms since epoch, UTC */
	time: number;
	lat: number;
	lon: number;
	lc: LocationClass;
	/** Argos error ellipse semi-major axis, metres */
	semiMajorM: number | null;
	/** Argos error ellipse semi-minor axis, metres */
	semiMinorM: number | null;
	/** Argos error ellipse orientation, degrees 0–180 */
	orientationDeg: number | null;
	/** GPS or other error radius, metres */
	errorRadiusM: number | null;
}

/** `column` is the CSV column name, or the GeoJSON property / GPX element or attribute name. */
export interface RowProblem {
	row: number;
	column: string;
	message: string;
}

/** One item per data row, in file order. */
export type ParseItem =
	{ ok: true; position: ParsedPosition } | { ok: false; row: number; problems: RowProblem[] };

/**
 * A problem with the file as a whole (not CSV, bad JSON, not a FeatureCollection, bad XML…).
 * It can be thrown after some rows were already yielded: keep nothing until the parse finished.
 */
export class ImportFileError extends Error {
	override name = 'ImportFileError';
}

export interface ParseOptions {
	format: ImportFormat;
	/** required for CSV */
	mapping?: CsvMapping;
	/**
	 * Class for rows without one: CSV rows whose class cell is empty or with no class column,
	 * GeoJSON features without a class property, GPX points without a class (GPX: 'G' if unset).
	 */
	defaultClass?: LocationClass;
	/** CSV only: ',', ';' or '\t'; detected from the header row when unset */
	delimiter?: CsvDelimiter;
	/** ms since epoch; times later than this (plus a small tolerance) are refused */
	now: number;
}

export type CsvDelimiter = ',' | ';' | '\t';
