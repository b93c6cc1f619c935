/**
 * GPX 1.0 / 1.1: every `wpt` and `trkpt`, in document order (`rtept` is a planned route, not an
 * observation, and is skipped). Position from the `lat` / `lon` attributes, time from `<time>`.
 *
 * GPX has no location class. The class is taken from, in order:
 * 1. an element inside the point's `<extensions>` named `lc`, `location_class`, `class` or
 *    `quality` (any namespace; its value must be a valid class, or the point is refused);
 * 2. the point's `<type>`, when it holds a valid class (other `<type>` texts are ignored);
 * 3. `defaultClass`, or 'G' (GPS) when none is given.
 * Optional error fields come from `<extensions>` elements named like the CSV columns
 * (`semi_major`, `semi_minor`, `orientation`, `error_radius`…); `<hdop>` is not an error radius.
 * Elements are matched by local name, so any namespace prefix is accepted.
 */
import type { Readable } from 'node:stream';
import { SaxesParser, type SaxesTagNS } from 'saxes';
import { isLocationClass, type LocationClass } from '../classes';
import { indexNames, lookupAlias } from './mapping';
import { ImportFileError, type ParseItem } from './types';
import { checkRow, type FieldValue } from './values';

/** Longer element texts are cut; no value we read is anywhere near this long. */
const MAX_TEXT = 1_000;
/**
 * Deepest element nesting read. A GPX point sits a few levels down; saxes' namespace handling
 * takes time in proportion to the depth at every tag, so 100,000 nested elements (a 1 MB file)
 * kept the server busy for minutes before this limit.
 */
export const MAX_DEPTH = 100;

const OPTIONAL_FIELDS = ['semiMajorM', 'semiMinorM', 'orientationDeg', 'errorRadiusM'] as const;

interface Point {
	row: number;
	lat: string | undefined;
	lon: string | undefined;
	time: string | undefined;
	type: string | undefined;
	/** leaf elements inside <extensions>, by local name, first occurrence */
	extensions: Map<string, string>;
	/** element depth below the point */
	depth: number;
	/** depth of <extensions>, 0 when outside it */
	extensionsDepth: number;
}

function pointInput(point: Point) {
	const { row } = point;
	const keys = indexNames(point.extensions.keys());
	const fromExtensions = (key: string | undefined): FieldValue | null =>
		key === undefined
			? null
			: { column: `extensions/${key}`, value: point.extensions.get(key) ?? '' };

	let lc = fromExtensions(lookupAlias(keys, 'lc'));
	const type = point.type?.trim().toUpperCase();
	if (lc === null && type !== undefined && isLocationClass(type)) {
		lc = { column: 'type', value: type };
	}
	const optional = Object.fromEntries(
		OPTIONAL_FIELDS.map((field) => [field, fromExtensions(lookupAlias(keys, field))])
	) as Record<(typeof OPTIONAL_FIELDS)[number], FieldValue | null>;
	return {
		row,
		time: {
			column: 'time',
			value: point.time,
			absentMessage: 'The point has no <time>; every fix needs a time.'
		},
		lat: {
			column: 'lat',
			value: point.lat,
			absentMessage: 'The point has no lat attribute.'
		},
		lon: {
			column: 'lon',
			value: point.lon,
			absentMessage: 'The point has no lon attribute.'
		},
		lc,
		...optional
	};
}

export async function* parseGpx(
	source: Readable,
	rules: { now: number; defaultClass?: LocationClass }
): AsyncGenerator<ParseItem, void, undefined> {
	const rowRules = { now: rules.now, defaultClass: rules.defaultClass ?? 'G' };
	const sax = new SaxesParser({ xmlns: true });
	const ready: ParseItem[] = [];
	let rootSeen = false;
	let count = 0;
	let point: Point | null = null;
	let capture: { name: string; text: string } | null = null;

	sax.on('xmldecl', (decl) => {
		if (decl.encoding !== undefined && !/^utf-?8$/i.test(decl.encoding)) {
			throw new ImportFileError(
				`The file declares the ${decl.encoding} encoding; save it as UTF-8 and upload it again.`
			);
		}
	});
	let depth = 0;
	sax.on('opentagstart', () => {
		if (++depth > MAX_DEPTH) {
			throw new ImportFileError(
				`Elements are nested more than ${MAX_DEPTH} deep in this file; in GPX a point is a few levels down.`
			);
		}
	});
	sax.on('opentag', (tag: SaxesTagNS) => {
		if (tag.isSelfClosing) depth--;
		if (!rootSeen) {
			rootSeen = true;
			if (tag.local !== 'gpx') {
				throw new ImportFileError(
					`This XML file is not GPX: its root element is <${tag.name}>, expected <gpx>.`
				);
			}
			return;
		}
		if (point === null) {
			if (tag.local === 'wpt' || tag.local === 'trkpt') {
				point = {
					row: ++count,
					lat: tag.attributes.lat?.value,
					lon: tag.attributes.lon?.value,
					time: undefined,
					type: undefined,
					extensions: new Map(),
					depth: 0,
					extensionsDepth: 0
				};
			}
			return;
		}
		point.depth++;
		capture = null;
		if (point.extensionsDepth > 0) capture = { name: tag.local, text: '' };
		else if (point.depth === 1) {
			if (tag.local === 'time' || tag.local === 'type') capture = { name: tag.local, text: '' };
			else if (tag.local === 'extensions') point.extensionsDepth = 1;
		}
	});
	const onText = (text: string) => {
		if (capture !== null && capture.text.length < MAX_TEXT) {
			capture.text = (capture.text + text).slice(0, MAX_TEXT);
		}
	};
	sax.on('text', onText);
	sax.on('cdata', onText);
	sax.on('closetag', (tag: SaxesTagNS) => {
		if (!tag.isSelfClosing) depth--;
		if (point === null) return;
		if (point.depth === 0) {
			ready.push(checkRow(pointInput(point), rowRules));
			point = null;
			return;
		}
		if (capture !== null && capture.name === tag.local) {
			if (point.extensionsDepth > 0) {
				if (!point.extensions.has(tag.local)) point.extensions.set(tag.local, capture.text);
			} else if (tag.local === 'time') point.time = capture.text;
			else point.type = capture.text;
		}
		capture = null;
		if (point.depth === 1 && tag.local === 'extensions') point.extensionsDepth = 0;
		point.depth--;
	});

	const decoder = new TextDecoder('utf-8', { fatal: true });
	let sourceError: unknown = null;
	source.once('error', (error) => (sourceError = error));
	let sawText = false;
	const write = (text: string) => {
		if (!sawText && text.trim() !== '') sawText = true;
		sax.write(text);
	};
	const decode = (bytes?: Uint8Array) => {
		try {
			return bytes === undefined ? decoder.decode() : decoder.decode(bytes, { stream: true });
		} catch {
			throw new ImportFileError(
				'The file is not UTF-8 text; save it as UTF-8 and upload it again.'
			);
		}
	};

	try {
		for await (const chunk of source as AsyncIterable<unknown>) {
			write(typeof chunk === 'string' ? chunk : decode(chunk as Uint8Array));
			for (const item of ready.splice(0)) yield item;
		}
		write(decode());
		if (!sawText) throw new ImportFileError('The file is empty.');
		sax.close();
		for (const item of ready.splice(0)) yield item;
	} catch (error) {
		if (error instanceof ImportFileError || error === sourceError) throw error;
		if (error instanceof Error) {
			throw new ImportFileError(
				`This is not well-formed XML (${error.message.replace(/\.$/, '')}).`
			);
		}
		throw error;
	}
}
