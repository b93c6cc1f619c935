// What every hostile case asserts: a 4xx with a message for a person, or a safe save; never an
// error that SvelteKit would turn into a 5xx; no rows written by a refusal (every table of the
// schema counted before and after); and /healthz still answering.
import { isActionFailure, isHttpError, isRedirect } from '@sveltejs/kit';
import { getTableName, is, sql } from 'drizzle-orm';
import { PgTable } from 'drizzle-orm/pg-core';
import { parse } from 'parse5';
import { expect } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Database } from '$lib/server/db';
import * as schema from '$lib/server/db/schema';
import { GET as healthz } from '../../../src/routes/healthz/+server';
import { fakeEvent } from '../newsroom-helpers';
import { publicEvent } from '../public-event';

/** The name of every table in src/lib/server/db/schema.ts. */
export const TABLE_NAMES: string[] = (Object.values(schema) as unknown[])
	.filter((value): value is PgTable => is(value, PgTable))
	.map((table) => getTableName(table))
	.sort();

/** Rows in every table, counted with count(*) in one statement. */
export async function tableCounts(db: Database): Promise<Record<string, number>> {
	const query = TABLE_NAMES.map(
		(name) => `SELECT '${name}' AS name, count(*)::int AS n FROM "${name}"`
	).join(' UNION ALL ');
	return rowsToCounts(await db.execute(sql.raw(query)));
}

function rowsToCounts(result: unknown): Record<string, number> {
	const { rows } = result as { rows: { name: string; n: number | string }[] };
	return Object.fromEntries(rows.map((r) => [r.name, Number(r.n)]));
}

/**
 * Keeps the row count of every table in a side table of the test database, updated by
 * statement-level triggers in the same transaction as each write. Counting 40 tables with
 * count(*) takes tens of milliseconds on PGlite; reading this takes one small query, so every
 * case can be checked. `expectCountsTrue` compares it with count(*) at the end of a file.
 */
export async function trackRowCounts(db: Database): Promise<void> {
	const statements = [
		'CREATE TABLE hostile_row_counts (name text PRIMARY KEY, n bigint NOT NULL)',
		`CREATE FUNCTION hostile_rows_added() RETURNS trigger LANGUAGE plpgsql AS $$
		BEGIN
			UPDATE hostile_row_counts SET n = n + (SELECT count(*) FROM added) WHERE name = TG_TABLE_NAME;
			RETURN NULL;
		END $$`,
		`CREATE FUNCTION hostile_rows_removed() RETURNS trigger LANGUAGE plpgsql AS $$
		BEGIN
			UPDATE hostile_row_counts SET n = n - (SELECT count(*) FROM removed) WHERE name = TG_TABLE_NAME;
			RETURN NULL;
		END $$`,
		...TABLE_NAMES.flatMap((name) => [
			`INSERT INTO hostile_row_counts SELECT '${name}', count(*) FROM "${name}"`,
			`CREATE TRIGGER hostile_added AFTER INSERT ON "${name}" REFERENCING NEW TABLE AS added
				FOR EACH STATEMENT EXECUTE FUNCTION hostile_rows_added()`,
			`CREATE TRIGGER hostile_removed AFTER DELETE ON "${name}" REFERENCING OLD TABLE AS removed
				FOR EACH STATEMENT EXECUTE FUNCTION hostile_rows_removed()`
		])
	];
	for (const statement of statements) await db.execute(sql.raw(statement));
}

/** The row counts kept by `trackRowCounts`. */
export async function trackedCounts(db: Database): Promise<Record<string, number>> {
	return rowsToCounts(await db.execute(sql.raw('SELECT name, n FROM hostile_row_counts')));
}

/** The kept counts equal count(*) of every table: the fast check was a true one. */
export async function expectCountsTrue(db: Database): Promise<void> {
	expect(await trackedCounts(db)).toEqual(await tableCounts(db));
}

export type Outcome =
	| { kind: 'refused'; status: number; message: string; data: unknown }
	| { kind: 'saved'; status: number; data: unknown; response?: Response }
	| { kind: 'redirect'; status: number; location: string };

function messageOf(data: unknown): string {
	if (typeof data === 'string') return data;
	if (!data || typeof data !== 'object') return '';
	const d = data as { message?: unknown; error?: unknown; errors?: unknown };
	if (typeof d.message === 'string' && d.message) return d.message;
	if (typeof d.error === 'string' && d.error) return d.error;
	if (d.errors && typeof d.errors === 'object') {
		const first = Object.values(d.errors as Record<string, unknown>).find(
			(v) => typeof v === 'string' && v !== ''
		);
		if (typeof first === 'string') return first;
	}
	return '';
}

async function responseMessage(response: Response): Promise<string> {
	const text = await response.clone().text();
	try {
		return messageOf(JSON.parse(text)) || text;
	} catch {
		return text;
	}
}

/**
 * Runs a handler or action and says how SvelteKit would answer. An error that is neither an
 * HttpError nor a redirect is rethrown: in the running app it would be a 500.
 */
export async function outcomeOf(run: () => unknown): Promise<Outcome> {
	let result: unknown;
	try {
		result = await run();
	} catch (error) {
		if (isRedirect(error)) {
			// SvelteKit puts the location into a header: a value a header cannot hold is a 500.
			new Headers({ location: error.location });
			return { kind: 'redirect', status: error.status, location: error.location };
		}
		if (isHttpError(error)) {
			return {
				kind: 'refused',
				status: error.status,
				message: error.body.message,
				data: error.body
			};
		}
		throw error;
	}
	if (isActionFailure(result)) {
		return {
			kind: 'refused',
			status: result.status,
			message: messageOf(result.data),
			data: result.data
		};
	}
	if (result instanceof Response) {
		if (result.status >= 400) {
			return {
				kind: 'refused',
				status: result.status,
				message: await responseMessage(result),
				data: null
			};
		}
		if (result.status >= 300 && result.status < 400) {
			return {
				kind: 'redirect',
				status: result.status,
				location: result.headers.get('location') ?? ''
			};
		}
		return { kind: 'saved', status: result.status, data: null, response: result };
	}
	return { kind: 'saved', status: 200, data: result };
}

export interface CaseOptions {
	/** Tables a refusal may still write to (e.g. the failed sign-in counter in rate_limits). */
	allow?: readonly string[];
	/** Checks a safe save: the value stored, how it renders. */
	saved?: (outcome: Outcome) => Promise<void> | void;
	/** The case is a refusal by design: a save would be a bug. */
	mustRefuse?: boolean;
}

/** Counts the cases each file runs, so that the suite can say (and check) how many there were. */
export class CaseCounter {
	readonly byOutcome = { refused: 0, saved: 0, redirect: 0 };
	get total() {
		return this.byOutcome.refused + this.byOutcome.saved + this.byOutcome.redirect;
	}
	report(file: string) {
		const { refused, saved, redirect } = this.byOutcome;
		console.info(
			`[hostile] ${file}: ${this.total} cases (${refused} refused with a 4xx, ${saved} saved safely, ${redirect} redirected)`
		);
	}
}

function diff(
	before: Record<string, number>,
	after: Record<string, number>,
	allow: readonly string[]
) {
	const changed: Record<string, string> = {};
	for (const name of TABLE_NAMES) {
		if (allow.includes(name)) continue;
		if (before[name] !== after[name]) changed[name] = `${before[name]} → ${after[name]}`;
	}
	return changed;
}

/** One hostile case: run it, classify the answer and check the database around it. */
export async function hostileCase(
	db: () => Database,
	counter: CaseCounter,
	run: () => unknown,
	options: CaseOptions = {}
): Promise<Outcome> {
	const before = await trackedCounts(db());
	const outcome = await outcomeOf(run);
	expect(outcome.status, 'never a 5xx').toBeLessThan(500);
	if (outcome.kind === 'refused') {
		expect(outcome.status).toBeGreaterThanOrEqual(400);
		expect(outcome.message.trim(), 'a refusal says why').not.toBe('');
		expect(
			diff(before, await trackedCounts(db()), options.allow ?? []),
			'a refusal writes nothing'
		).toEqual({});
	} else {
		expect(options.mustRefuse ?? false, `expected a refusal, got ${outcome.kind}`).toBe(false);
		await options.saved?.(outcome);
	}
	counter.byOutcome[outcome.kind]++;
	return outcome;
}

/** The health check answers 200 with the database up. */
export async function expectHealthy(): Promise<void> {
	const response = await healthz(publicEvent('/healthz'));
	expect(response.status).toBe(200);
	expect(await response.json()).toMatchObject({ status: 'ok', database: { state: 'up' } });
}

/** A short label for a value in test names. */
export function label(value: string): string {
	const shown = JSON.stringify(value.length > 40 ? `${value.slice(0, 40)}…` : value);
	return value.length > 40 ? `${shown} (${value.length} chars)` : shown;
}

const SCRIPT_ELEMENTS = new Set(['script', 'iframe', 'frame', 'object', 'embed', 'base', 'applet']);
const URL_ATTRIBUTES = new Set([
	'href',
	'src',
	'action',
	'formaction',
	'xlink:href',
	'srcset',
	'poster',
	'data'
]);

type Parse5Node = {
	nodeName: string;
	tagName?: string;
	attrs?: { name: string; value: string }[];
	childNodes?: Parse5Node[];
	content?: Parse5Node;
};

/**
 * The first piece of live markup in `html` as a browser would parse it (parse5 follows the HTML
 * standard's parser): an element that runs script or loads a frame, an event-handler attribute,
 * or a script URL in a link or source. Null when there is none: escaped text (&lt;script&gt;)
 * and markup inside attribute values are not live.
 */
export function liveMarkup(html: string): string | null {
	const stack: Parse5Node[] = [parse(html) as unknown as Parse5Node];
	while (stack.length > 0) {
		const node = stack.pop()!;
		if (node.tagName) {
			if (SCRIPT_ELEMENTS.has(node.tagName)) return `a <${node.tagName}> element`;
			for (const { name, value } of node.attrs ?? []) {
				if (/^on/i.test(name))
					return `an event-handler attribute ${name}="${value}" on <${node.tagName}>`;
				// browsers drop control characters and spaces around the scheme
				// eslint-disable-next-line no-control-regex
				const scheme = value.replace(/[\u0000-\u0020]/g, '').toLowerCase();
				if (URL_ATTRIBUTES.has(name) && /^(javascript|vbscript|data):/.test(scheme)) {
					return `a script URL ${name}="${value}" on <${node.tagName}>`;
				}
			}
		}
		stack.push(...(node.childNodes ?? []));
		if (node.content) stack.push(node.content);
	}
	return null;
}

/** A form field value as a hostile client may send it: text, a file, the field twice, or none. */
export type FormValue = string | string[] | File | undefined;

/** Wrong shapes for any form field. */
export const SHAPES: { id: string; value: FormValue }[] = [
	{ id: 'a file instead of text', value: new File(['<script>alert(1)</script>'], '../../x.html') },
	{ id: 'the field twice', value: ['first', 'second'] },
	{ id: 'the field missing', value: undefined }
];

/**
 * What a server reads back from a multipart form: line breaks become CRLF (the HTML standard's
 * form encoding, which undici follows) and lone surrogates become U+FFFD.
 */
export function asReceived(value: string): string {
	// The multipart parser decodes with TextDecoder, which drops a leading byte order mark.
	return value
		.toWellFormed()
		.replace(/\r\n|\r|\n/g, '\r\n')
		.replace(/^\uFEFF/, '');
}

let address = 0;

/**
 * A POST event with a multipart body, built on the shared fakeEvent, from its own client address
 * each time so that the per-address limits on mail and sign-in do not answer every case.
 */
export function formEvent(
	path: string,
	user: SessionUser | null,
	form: Record<string, FormValue>,
	params: Record<string, string> = {}
) {
	const body = new FormData();
	for (const [key, value] of Object.entries(form)) {
		if (value === undefined) continue;
		if (value instanceof File) body.append(key, value);
		else for (const v of [value].flat()) body.append(key, v);
	}
	const event = fakeEvent(path, user, {}, params) as unknown as { url: URL };
	address++;
	const client = `10.${(address >> 16) & 255}.${(address >> 8) & 255}.${address & 255}`;
	return {
		...event,
		request: new Request(event.url, { method: 'POST', body }),
		cookies: { get: () => undefined, getAll: () => [], set: () => {}, delete: () => {} },
		getClientAddress: () => client
	} as never;
}
