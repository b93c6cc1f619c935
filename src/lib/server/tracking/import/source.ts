import { Readable } from 'node:stream';
import type { ReadableStream as NodeReadableStream } from 'node:stream/web';
import type { ImportFormat } from './types';

/** A Node `Readable` over an uploaded `File` / `Blob` or a web byte stream, read as it streams. */
export function toReadable(input: Blob | ReadableStream<Uint8Array>): Readable {
	const web = input instanceof Blob ? input.stream() : input;
	return Readable.fromWeb(web as unknown as NodeReadableStream<Uint8Array>);
}

const EXTENSIONS: Readonly<Record<string, ImportFormat>> = {
	csv: 'csv',
	tsv: 'csv',
	txt: 'csv',
	geojson: 'geojson',
	json: 'geojson',
	gpx: 'gpx'
};

/**
 * The format of an upload from its first bytes (a few KB is plenty), with the file name's
 * extension as a tie-breaker. The content wins over the name: JSON is GeoJSON, XML is GPX when
 * it has a `<gpx` root or a .gpx name, other XML and binary files are null. Other text is CSV
 * when named .csv, .tsv or .txt, or, without any extension, when its first line has a comma,
 * semicolon or tab.
 */
export function detectFormat(fileName: string, firstBytes: Uint8Array): ImportFormat | null {
	const extension = /\.([a-z0-9]+)$/i.exec(fileName.trim())?.[1]?.toLowerCase();
	const byName = extension === undefined ? undefined : EXTENSIONS[extension];
	if (firstBytes.includes(0)) return null;
	const text = new TextDecoder('utf-8')
		.decode(firstBytes)
		.replace(/^\uFEFF/, '')
		.trimStart();
	if (text === '') return byName ?? null;
	if (text.startsWith('{') || text.startsWith('[')) return 'geojson';
	if (text.startsWith('<')) {
		return /<(?:[\w-]+:)?gpx[\s>]/.test(text) || byName === 'gpx' ? 'gpx' : null;
	}
	if (byName === 'csv') return 'csv';
	// a name with another extension (.md, .html, .geojson holding text…) is not a CSV upload
	if (extension !== undefined) return null;
	const firstLine = text.split(/\r?\n/, 1)[0];
	return /[,;\t]/.test(firstLine) ? 'csv' : null;
}
