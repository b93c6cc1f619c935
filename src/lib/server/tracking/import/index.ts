/**
 * Streaming readers for uploaded satellite positions (CSV, GeoJSON, GPX): one `ParseItem` per
 * data row, validated by the same rules whatever the format. Nothing here touches the database.
 */
import type { Readable } from 'node:stream';
import { parseCsv } from './csv';
import { parseGeoJson } from './geojson';
import { parseGpx } from './gpx';
import type { ParseItem, ParseOptions } from './types';

export { previewCsv, sniffDelimiter, type CsvPreview } from './csv';
export { FIELD_ALIASES, normaliseName, suggestMapping, validateMapping } from './mapping';
export type { MappingErrors } from './mapping';
export { detectFormat, toReadable } from './source';
export * from './types';
export { EARLIEST_TIME, FUTURE_TOLERANCE_MS, parseTimestamp } from './values';

/**
 * Reads `source` as it streams and yields one item per data row, in file order. A problem with
 * the file as a whole throws `ImportFileError`, possibly after some items: keep nothing until the
 * generator has finished. Stopping early (`break`, `return()`) destroys `source`.
 */
export function parsePositions(
	source: Readable,
	options: ParseOptions
): AsyncGenerator<ParseItem, void, undefined> {
	const rules = { now: options.now, defaultClass: options.defaultClass };
	// The parsers listen to `source` from their first step, and the caller may await a database
	// round trip before that (importPositions opens its transaction first). An upload cut off in
	// between would be an 'error' event with no listener, which ends the process; keep it
	// instead, and throw it from the first step.
	source.on('error', () => {});
	switch (options.format) {
		case 'csv':
			if (!options.mapping) throw new TypeError('parsePositions: a CSV import needs a mapping');
			return failedEarly(
				source,
				parseCsv(source, { ...rules, mapping: options.mapping, delimiter: options.delimiter })
			);
		case 'geojson':
			return failedEarly(source, parseGeoJson(source, rules));
		case 'gpx':
			return failedEarly(source, parseGpx(source, rules));
	}
}

async function* failedEarly(
	source: Readable,
	items: AsyncGenerator<ParseItem, void, undefined>
): AsyncGenerator<ParseItem, void, undefined> {
	if (source.errored) throw source.errored;
	yield* items;
}
