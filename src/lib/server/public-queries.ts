import { z } from 'zod';
import { MAX_NAME_SEARCH, type PatientFilters } from '$lib/patient-filters';
import { PATIENT_STATUSES, SPECIES, STORY_KINDS, type StoryKind } from './db/schema';

// Query strings of the public patient and story lists (JSON API and pages). An empty value, as a
// GET form sends for "all", means no filter.

const blankIsAbsent = (value: unknown) =>
	typeof value === 'string' && value.trim() === '' ? undefined : value;

const patientFields = {
	species: z.preprocess(
		blankIsAbsent,
		z.enum(SPECIES, { error: `species must be one of: ${SPECIES.join(', ')}.` }).optional()
	),
	status: z.preprocess(
		blankIsAbsent,
		z
			.enum(PATIENT_STATUSES, {
				error: `status must be one of: ${PATIENT_STATUSES.join(', ')}.`
			})
			.optional()
	),
	q: z.preprocess(
		blankIsAbsent,
		z
			.string()
			.trim()
			.max(MAX_NAME_SEARCH, `Search for at most ${MAX_NAME_SEARCH} characters of a name.`)
			.optional()
	)
};

export const patientListQuery = z.object(patientFields);

/** Patient-list query parameters that may appear more than once are refused, not guessed at. */
function single(params: URLSearchParams, keys: readonly string[]): string | null {
	for (const key of keys) {
		if (params.getAll(key).length > 1) return `Give ${key} at most once.`;
	}
	return null;
}

function read(
	params: URLSearchParams,
	keys: readonly string[]
): Record<string, string | undefined> {
	return Object.fromEntries(keys.map((key) => [key, params.get(key) ?? undefined]));
}

export type QueryResult<T> = { ok: true; value: T } | { ok: false; message: string };

function firstMessage(error: z.ZodError): string {
	return error.issues[0]?.message ?? 'The query is not valid.';
}

/** Strict reading for the API: any bad value is an error. */
export function parsePatientListQuery(params: URLSearchParams): QueryResult<PatientFilters> {
	const keys = Object.keys(patientFields);
	const repeated = single(params, keys);
	if (repeated) return { ok: false, message: repeated };
	const result = patientListQuery.safeParse(read(params, keys));
	return result.success
		? { ok: true, value: result.data }
		: { ok: false, message: firstMessage(result.error) };
}

/**
 * Lenient reading for the page: a bad value is dropped (and reported) while the good ones still
 * filter, so an edited link shows something useful instead of an error page.
 */
export function readPatientFilters(params: URLSearchParams): {
	filters: PatientFilters;
	problem: string | null;
} {
	const filters: PatientFilters = {};
	let problem: string | null = null;
	for (const [key, schema] of Object.entries(patientFields)) {
		const result = schema.safeParse(params.get(key) ?? undefined);
		if (result.success) {
			if (result.data !== undefined) Object.assign(filters, { [key]: result.data });
		} else {
			problem ??= firstMessage(result.error);
		}
	}
	return { filters, problem };
}

export const STORY_SLUG = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
export const MAX_STORY_PAGE = 50;

const storyFields = {
	patient: z.preprocess(
		blankIsAbsent,
		z
			.string()
			.max(120, 'patient must be a patient’s short name from its address, like /patients/name.')
			.regex(
				STORY_SLUG,
				'patient must be a patient’s short name from its address, like /patients/name.'
			)
			.optional()
	),
	kind: z.preprocess(
		blankIsAbsent,
		z.enum(STORY_KINDS, { error: `kind must be one of: ${STORY_KINDS.join(', ')}.` }).optional()
	),
	limit: z.preprocess(
		blankIsAbsent,
		z.coerce
			.number({ error: `limit must be a whole number from 1 to ${MAX_STORY_PAGE}.` })
			.int(`limit must be a whole number from 1 to ${MAX_STORY_PAGE}.`)
			.min(1, `limit must be a whole number from 1 to ${MAX_STORY_PAGE}.`)
			.max(MAX_STORY_PAGE, `limit must be a whole number from 1 to ${MAX_STORY_PAGE}.`)
			.default(20)
	),
	before: z.preprocess(
		blankIsAbsent,
		z.iso
			.datetime({ offset: true, error: 'before must be a moment like 2026-05-01T12:00:00Z.' })
			.transform((value) => new Date(value))
			.optional()
	)
};

export interface StoryListQuery {
	patient?: string;
	kind?: StoryKind;
	limit: number;
	before?: Date;
}

export const storyListQuery = z.object(storyFields);

export function parseStoryListQuery(params: URLSearchParams): QueryResult<StoryListQuery> {
	const keys = Object.keys(storyFields);
	const repeated = single(params, keys);
	if (repeated) return { ok: false, message: repeated };
	const result = storyListQuery.safeParse(read(params, keys));
	return result.success
		? { ok: true, value: result.data }
		: { ok: false, message: firstMessage(result.error) };
}
