import { finished, pipeline, type Readable } from 'node:stream';
import { CsvError, parse } from 'csv-parse';
import type { LocationClass } from '../types';
import { suggestMapping, validateMapping } from './mapping';
import { csvRowReader } from './csv-records';
import { ImportFileError, type CsvDelimiter, type CsvMapping, type ParseItem } from './types';
import { parseDecimal, parseTimestamp, quote } from './values';

const DELIMITERS: readonly CsvDelimiter[] = [',', ';', '\t'];
const DELIMITER_NAMES: Readonly<Record<CsvDelimiter, string>> = {
	',': 'comma',
	';': 'semicolon',
	'\t': 'tab'
};
/**
 * The longest line read, header or record (csv-parse's `max_record_size` counts the characters of
 * a record's cells). A position file has short lines; without a cap one 200 MB line was read
 * whole into memory.
 */
const MAX_LINE_BYTES = 128_000;
/**
 * Most columns a position file may have, header or record. Real files from tag makers have a few
 * dozen; `max_record_size` does not see a line of a million empty cells (",,,,…").
 */
export const MAX_COLUMNS = 200;

const count = (n: number) => n.toLocaleString('en-US');
const tooManyColumns = (where: string, n: number, more = false) =>
	`${where} has ${more ? 'more than ' : ''}${count(n)} columns; a position file has at most ${MAX_COLUMNS}.`;
/** Records handed on per await; bounds the batch when the parser holds many chunks' worth. */
const BATCH_RECORDS = 4096;

/**
 * Counts each candidate outside double quotes in the header line; the most frequent wins, ties
 * going to the earlier of comma, semicolon, tab. The header is used rather than csv-parse's
 * `delimiter_auto`, which samples data rows too: a semicolon file full of decimal commas
 * ("12,5") would be read as comma-separated, and its rows could not be told apart from good ones.
 */
export function sniffDelimiter(headerLine: string): CsvDelimiter | null {
	const counts = new Map<CsvDelimiter, number>(DELIMITERS.map((d) => [d, 0]));
	let quoted = false;
	for (const char of headerLine) {
		if (char === '"') quoted = !quoted;
		else if (!quoted && counts.has(char as CsvDelimiter)) {
			counts.set(char as CsvDelimiter, (counts.get(char as CsvDelimiter) ?? 0) + 1);
		}
	}
	let best: CsvDelimiter | null = null;
	for (const d of DELIMITERS) {
		if ((counts.get(d) ?? 0) > (best === null ? 0 : (counts.get(best) ?? 0))) best = d;
	}
	return best;
}

function toBuffer(chunk: unknown): Buffer {
	if (typeof chunk === 'string') return Buffer.from(chunk, 'utf8');
	if (chunk instanceof Uint8Array) {
		return Buffer.from(chunk.buffer, chunk.byteOffset, chunk.byteLength);
	}
	throw new TypeError('expected a byte stream');
}

interface CsvRecord {
	fields: string[];
	/** line in the file where the record starts, from 1 */
	line: number;
}

interface OpenCsv {
	delimiter: CsvDelimiter;
	headers: string[];
	/** data records, in batches */
	batches: AsyncGenerator<CsvRecord[], void, undefined>;
}

/** Reads up to the end of the first non-blank line, keeping the bytes to replay to the parser. */
async function readHead(
	iterator: AsyncIterator<unknown>
): Promise<{ head: Buffer[]; firstLine: string }> {
	const head: Buffer[] = [];
	let size = 0;
	for (;;) {
		const next = await iterator.next();
		if (next.done) break;
		const chunk = toBuffer(next.value);
		head.push(chunk);
		size += chunk.length;
		if (chunk.includes(0x0a) || chunk.includes(0x0d)) {
			const text = Buffer.concat(head)
				.toString('utf8')
				.replace(/^\uFEFF/, '');
			const match = /^\s*([^\r\n]*)[\r\n]/.exec(text);
			if (match && match[1].trim() !== '') return { head, firstLine: match[1] };
		}
		if (size > MAX_LINE_BYTES) {
			const start = Buffer.concat(head).toString('utf8');
			const delimiter = sniffDelimiter(start);
			const columns = delimiter === null ? 0 : start.split(delimiter).length;
			throw new ImportFileError(
				columns > MAX_COLUMNS
					? tooManyColumns('The header row', columns - 1, true)
					: 'The first line is longer than 128 000 bytes; this does not look like a CSV file with a header row.'
			);
		}
	}
	const text = Buffer.concat(head)
		.toString('utf8')
		.replace(/^\uFEFF/, '');
	return { head, firstLine: text.trim().split(/[\r\n]/)[0] ?? '' };
}

function headerProblem(headers: string[]): string | null {
	const seen = new Map<string, number>();
	for (const [i, name] of headers.entries()) {
		if (name === '') {
			return `Column ${i + 1} has no name in the header row; every column needs a name.`;
		}
		if (parseDecimal(name).ok || parseTimestamp(name).ok) {
			return `The first line looks like data (${quote(name)}), not column names; add a header row naming the columns.`;
		}
		const key = name.toLowerCase();
		const earlier = seen.get(key);
		if (earlier !== undefined) {
			return `The header row names ${quote(name)} twice (columns ${earlier + 1} and ${i + 1}); column names must be distinct.`;
		}
		seen.set(key, i);
	}
	return null;
}

async function openCsv(source: Readable, delimiterOverride?: CsvDelimiter): Promise<OpenCsv> {
	const iterator = source[Symbol.asyncIterator]();
	const refuse = async (message: string) => {
		await iterator.return?.();
		return new ImportFileError(message);
	};
	const { head, firstLine } = await readHead(iterator).catch(async (error: unknown) => {
		await iterator.return?.();
		throw error;
	});
	if (firstLine.trim() === '') throw await refuse('The file is empty.');
	const delimiter = delimiterOverride ?? sniffDelimiter(firstLine);
	if (delimiter === null) {
		throw await refuse(
			'The first line has no comma, semicolon or tab, so its columns cannot be told apart; a position file needs a header row with at least time, latitude and longitude columns.'
		);
	}

	async function* replay() {
		try {
			yield* head;
			for (;;) {
				const next = await iterator.next();
				if (next.done) return;
				yield toBuffer(next.value);
			}
		} finally {
			await iterator.return?.();
		}
	}
	// Empty lines are not skipped by csv-parse but here, so that lines can be counted without its
	// `info` option (which doubles the parse time and miscounts CRLF inside quoted fields).
	const parser = parse({
		delimiter,
		bom: true,
		trim: true,
		relax_quotes: true,
		relax_column_count: true,
		max_record_size: MAX_LINE_BYTES
	});
	// Errors reach the consumer through the parser; the callback is only here to satisfy pipeline.
	pipeline(replay, parser, () => {});

	/**
	 * Records in batches of what the parser holds: one await per batch rather than one per
	 * record, which was a good part of the reading time (the readable side's own async iterator
	 * yields record by record). Errors and an early end are what that iterator reports. The
	 * first batch is the header record alone.
	 */
	async function* records(): AsyncGenerator<CsvRecord[], void, undefined> {
		let wake: (() => void) | null = null;
		const resume = () => {
			const waiting = wake;
			wake = null;
			waiting?.();
		};
		/** undefined: still reading; null: ended; otherwise what stopped it */
		let ended: unknown = undefined;
		parser.on('readable', resume);
		const stopWatching = finished(parser, { writable: false }, (error) => {
			ended = error ?? null;
			resume();
		});
		let lastLine = 0;
		let headerRead = false;
		let limit = 1;
		try {
			for (;;) {
				const batch: CsvRecord[] = [];
				let fields: string[] | null;
				while (
					batch.length < limit &&
					!parser.destroyed &&
					(fields = parser.read() as string[] | null) !== null
				) {
					const line = lastLine + 1;
					lastLine = line;
					if (fields.length > MAX_COLUMNS) {
						const where = headerRead ? `Line ${count(line)}` : 'The header row';
						throw new ImportFileError(tooManyColumns(where, fields.length));
					}
					let blank = true;
					for (const field of fields) {
						// a quoted field can span lines
						if (field.includes('\n') || field.includes('\r')) {
							lastLine += field.match(/\r\n|\r|\n/g)?.length ?? 0;
						}
						if (blank && field !== '' && field.trim() !== '') blank = false;
					}
					if (!blank) {
						batch.push({ fields, line });
						headerRead = true;
					}
				}
				if (batch.length > 0) {
					yield batch;
					limit = BATCH_RECORDS;
				} else if (ended === null) return;
				else if (ended !== undefined) throw ended;
				else await new Promise<void>((resolve) => (wake = resolve));
			}
		} catch (error) {
			if (error instanceof CsvError && error.code === 'CSV_MAX_RECORD_SIZE') {
				throw new ImportFileError(
					`Line ${count((error as CsvError & { lines?: number }).lines ?? lastLine + 1)} is longer than ${count(MAX_LINE_BYTES)} characters; a position file has short lines (a time, a latitude, a longitude and a few values more).`
				);
			}
			if (error instanceof CsvError) {
				throw new ImportFileError(`This is not a readable CSV file: ${error.message}`);
			}
			throw error;
		} finally {
			parser.off('readable', resume);
			stopWatching();
			if (ended === undefined) parser.destroy();
		}
	}

	const all = records();
	const first = await all.next();
	if (first.done) throw new ImportFileError('The file is empty.');
	const headers = first.value[0].fields.map((name) => name.trim());
	while (headers.length > 1 && headers[headers.length - 1] === '') headers.pop();
	const problem = headerProblem(headers);
	if (problem !== null) {
		await all.return();
		throw new ImportFileError(problem);
	}
	if (headers.length < 2) {
		await all.return();
		throw new ImportFileError(
			`The header row has one column only, read with the ${DELIMITER_NAMES[delimiter]} as separator; a position file needs at least time, latitude and longitude columns.`
		);
	}
	return { delimiter, headers, batches: all };
}

export interface CsvPreview {
	delimiter: CsvDelimiter;
	headers: string[];
	/** the first data rows, cells as written (trimmed) */
	rows: string[][];
	suggested: Partial<CsvMapping>;
}

/** Reads only the header and the first `rows` data rows, then stops reading `source`. */
export async function previewCsv(source: Readable, rows = 10): Promise<CsvPreview> {
	const { delimiter, headers, batches } = await openCsv(source);
	const preview: string[][] = [];
	try {
		while (preview.length < rows) {
			const next = await batches.next();
			if (next.done) break;
			for (const { fields } of next.value.slice(0, rows - preview.length)) preview.push(fields);
		}
	} finally {
		await batches.return();
	}
	return { delimiter, headers, rows: preview, suggested: suggestMapping(headers) };
}

export async function* parseCsv(
	source: Readable,
	options: {
		mapping: CsvMapping;
		defaultClass?: LocationClass;
		delimiter?: CsvDelimiter;
		now: number;
	}
): AsyncGenerator<ParseItem, void, undefined> {
	const { headers, batches } = await openCsv(source, options.delimiter);
	const checked = validateMapping(headers, options.mapping, options.defaultClass);
	if (!checked.ok) {
		await batches.return();
		throw new ImportFileError(
			`The columns chosen do not fit this file: ${Object.values(checked.errors).join(' ')}`
		);
	}
	const readRow = csvRowReader(headers, checked.mapping, {
		now: options.now,
		defaultClass: checked.defaultClass ?? options.defaultClass
	});
	for await (const batch of batches) {
		for (const { fields, line } of batch) yield readRow(fields, line);
	}
}
