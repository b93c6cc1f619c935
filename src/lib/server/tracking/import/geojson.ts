/**
 * GeoJSON (RFC 7946) FeatureCollection of Point features, read one feature at a time.
 *
 * Per feature: position from `geometry.coordinates` ([longitude, latitude], altitude ignored);
 * time from the first of the properties `timestamp`, `time`, `datetime`, `date`; class from
 * `lc`, `location_class`, `class` or `quality`; optional error fields under the same names as
 * CSV columns (`semi_major`, `semi_minor`, `orientation`, `error_radius`…). Property names are
 * matched like CSV headers (case and punctuation ignored).
 */
import { pipeline, type Readable } from 'node:stream';
import Assembler from 'stream-json/assembler.js';
import type { Token } from 'stream-json/parser.js';
import withParser from 'stream-json/utils/with-parser.js';
import type { LocationClass } from '../types';
import { indexNames, lookupAlias } from './mapping';
import { ImportFileError, type MappingField, type ParseItem, type RowProblem } from './types';
import { checkRow, quote, type FieldValue } from './values';

/**
 * A position feature has a few dozen values; this bound keeps one oversized feature from being
 * assembled in memory whole.
 */
export const MAX_FEATURE_TOKENS = 100_000;

const OPTIONAL_FIELDS = ['semiMajorM', 'semiMinorM', 'orientationDeg', 'errorRadiusM'] as const;

function isObject(value: unknown): value is Record<string, unknown> {
	return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function property(
	properties: Record<string, unknown>,
	keys: ReadonlyMap<string, string>,
	field: MappingField
): FieldValue | null {
	const key = lookupAlias(keys, field);
	return key === undefined ? null : { column: key, value: properties[key] };
}

export function checkFeature(
	row: number,
	feature: unknown,
	rules: { now: number; defaultClass?: LocationClass }
): ParseItem {
	const problems: RowProblem[] = [];
	const problem = (column: string, message: string) => problems.push({ row, column, message });
	if (!isObject(feature)) {
		problem('features', `Feature ${row} is ${quote(feature)}, not a GeoJSON Feature object.`);
		return { ok: false, row, problems };
	}
	if (feature.type !== 'Feature') {
		problem('type', `The type is ${quote(feature.type ?? null)}; expected “Feature”.`);
	}

	let lat: FieldValue | null = null;
	let lon: FieldValue | null = null;
	const geometry = feature.geometry;
	if (!isObject(geometry)) {
		problem('geometry', 'The feature has no geometry; each fix needs a Point.');
	} else if (geometry.type === 'MultiPoint') {
		problem(
			'geometry.type',
			'MultiPoint geometries are not accepted; give each fix its own Point feature with its own time.'
		);
	} else if (geometry.type !== 'Point') {
		problem(
			'geometry.type',
			`${quote(geometry.type ?? null)} geometries are not accepted; each fix must be a Point.`
		);
	} else {
		const c = geometry.coordinates;
		if (!Array.isArray(c) || c.length < 2) {
			problem('geometry.coordinates', 'Point coordinates must be [longitude, latitude].');
		} else {
			for (const [i, name] of [
				[0, 'longitude'],
				[1, 'latitude']
			] as const) {
				if (typeof c[i] !== 'number') {
					problem(
						`geometry.coordinates[${i}]`,
						`The ${name} ${quote(c[i])} is not a JSON number; write it without quotes.`
					);
				}
			}
			if (typeof c[0] === 'number') lon = { column: 'geometry.coordinates[0]', value: c[0] };
			if (typeof c[1] === 'number') lat = { column: 'geometry.coordinates[1]', value: c[1] };
		}
	}

	const given = feature.properties ?? {};
	if (!isObject(given)) {
		problem('properties', `The properties are ${quote(given)}; expected an object.`);
	}
	const properties: Record<string, unknown> = isObject(given) ? given : {};
	const keys = indexNames(Object.keys(properties));
	const time = property(properties, keys, 'time') ?? {
		column: 'timestamp',
		value: undefined,
		absentMessage:
			'No time given; add a timestamp, time, datetime or date property such as "2024-03-01T12:00:00Z".'
	};
	let lc = property(properties, keys, 'lc');
	if (lc === null && !rules.defaultClass) {
		lc = {
			column: 'lc',
			value: undefined,
			absentMessage:
				'No location class; add an lc, location_class, class or quality property, or choose a default class.'
		};
	}
	const optional = Object.fromEntries(
		OPTIONAL_FIELDS.map((field) => [field, property(properties, keys, field)])
	) as Record<(typeof OPTIONAL_FIELDS)[number], FieldValue | null>;

	return checkRow(
		{
			row,
			time,
			lat,
			lon,
			lc,
			...optional,
			problems
		},
		rules
	);
}

const NOT_A_COLLECTION =
	'The file is not a GeoJSON FeatureCollection; expected {"type": "FeatureCollection", "features": [...]}.';

const FEATURES_NOT_ARRAY = 'The "features" member must be an array of Features.';

function typeProblem(type: unknown): string | null {
	if (type === 'FeatureCollection') return null;
	if (type === 'Feature') {
		return 'The file holds a single Feature; wrap it in {"type": "FeatureCollection", "features": [...]}.';
	}
	return `The file's type is ${quote(type)}; expected a GeoJSON FeatureCollection.`;
}

/**
 * Walks the top level of the document token by token (type, features; anything else skipped)
 * and assembles one element of `features` at a time, so the type is checked wherever it appears
 * and memory stays bounded by one feature. Synchronous, so that it runs inside stream-json's own
 * pipeline: only finished rows cross into async iteration, not every token.
 */
class CollectionWalker {
	private depth = 0;
	private topKey: string | null = null;
	private started = false;
	private type: unknown = undefined;
	private inFeatures = false;
	private sawFeatures = false;
	private index = 0;
	private assembler: Assembler | null = null;
	private featureTokens = 0;

	constructor(private readonly rules: { now: number; defaultClass?: LocationClass }) {}

	consume(token: Token): ParseItem | undefined {
		const assembler = this.assembler;
		if (assembler !== null) {
			assembler.consume(token);
			if (assembler.done) {
				this.assembler = null;
				return checkFeature(this.index, assembler.current, this.rules);
			}
			if (++this.featureTokens > MAX_FEATURE_TOKENS) {
				throw new ImportFileError(
					`Feature ${this.index} is too large (over ${MAX_FEATURE_TOKENS} values); a position needs only a Point and a few properties.`
				);
			}
			return undefined;
		}
		switch (token.name) {
			case 'startObject':
			case 'startArray':
				if (this.depth === 0) {
					if (token.name !== 'startObject') throw new ImportFileError(NOT_A_COLLECTION);
					this.started = true;
				} else if (this.inFeatures && this.depth === 2) {
					this.index++;
					this.featureTokens = 1;
					this.assembler = new Assembler();
					this.assembler.consume(token);
					return undefined;
				} else if (this.depth === 1 && this.topKey === 'features') {
					if (token.name !== 'startArray') throw new ImportFileError(FEATURES_NOT_ARRAY);
					this.inFeatures = true;
					this.sawFeatures = true;
				} else if (this.depth === 1 && this.topKey === 'type') {
					throw new ImportFileError(NOT_A_COLLECTION);
				}
				this.depth++;
				return undefined;
			case 'endObject':
			case 'endArray':
				this.depth--;
				if (this.inFeatures && this.depth === 1) this.inFeatures = false;
				return undefined;
			case 'keyValue':
				if (this.depth === 1) this.topKey = token.value;
				return undefined;
			case 'stringValue':
			case 'numberValue':
			case 'nullValue':
			case 'trueValue':
			case 'falseValue':
				if (this.depth === 0) throw new ImportFileError(NOT_A_COLLECTION);
				if (this.depth === 1 && this.topKey === 'type') {
					this.type = token.value;
					const problem = typeProblem(this.type);
					if (problem !== null) throw new ImportFileError(problem);
				} else if (this.depth === 1 && this.topKey === 'features') {
					throw new ImportFileError(FEATURES_NOT_ARRAY);
				} else if (this.inFeatures && this.depth === 2) {
					this.index++;
					const value = token.name === 'numberValue' ? Number(token.value) : token.value;
					return checkFeature(this.index, value, this.rules);
				}
				return undefined;
			default:
				return undefined;
		}
	}

	/** File-level checks once the whole document was read. */
	finish(): void {
		if (!this.started) throw new ImportFileError('The file is empty.');
		if (this.type === undefined) {
			throw new ImportFileError(
				'The file has no "type" member; expected a GeoJSON FeatureCollection.'
			);
		}
		if (!this.sawFeatures) {
			throw new ImportFileError('The FeatureCollection has no "features" array.');
		}
	}
}

type Stage = Parameters<typeof withParser.asStream>[0];

export async function* parseGeoJson(
	source: Readable,
	rules: { now: number; defaultClass?: LocationClass }
): AsyncGenerator<ParseItem, void, undefined> {
	const walker = new CollectionWalker(rules);
	// In a Node stream, stream-chain drops undefined results, so `consume` returns one row or none.
	const stage = (() => (token: Token) => walker.consume(token)) as unknown as Stage;
	const items = withParser.asStream(stage, { streamValues: false });
	let sourceError: unknown = null;
	source.once('error', (error) => (sourceError = error));
	let blank = true;
	// Only to tell an empty upload from bad JSON: stream-json reports both as "expected a value".
	async function* watched() {
		for await (const chunk of source as AsyncIterable<Buffer | string>) {
			if (blank) blank = /^[\s\uFEFF]*$/.test(chunk.toString());
			yield chunk;
		}
	}
	pipeline(watched, items, () => {});

	try {
		yield* items as AsyncIterable<ParseItem>;
	} catch (error) {
		if (error instanceof ImportFileError || error === sourceError) throw error;
		if (blank) throw new ImportFileError('The file is empty.');
		if (error instanceof Error) {
			throw new ImportFileError(`This is not valid JSON (${error.message}).`);
		}
		throw error;
	}
	walker.finish();
}
