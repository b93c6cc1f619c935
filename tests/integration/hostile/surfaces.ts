// Declares a form action as a hostile-input surface: a valid form, the fields to poison and the
// payloads for each, and how to read back what a safe save stored.
import { beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Database } from '$lib/server/db';
import { refuseUnreadableRequests } from '$lib/server/request-guard';
import {
	asReceived,
	CaseCounter,
	expectCountsTrue,
	expectHealthy,
	formEvent,
	hostileCase,
	trackRowCounts,
	type FormValue,
	type Outcome
} from './harness';

export interface FieldCases {
	field: string;
	payloads: readonly { id: string; value: FormValue }[];
	/** Where the payload goes: a form field (default) or a route parameter. */
	in?: 'form' | 'params';
	/** The value a safe save stored for this field (read from the database). */
	stored?: (outcome: Outcome, context: CaseContext) => Promise<unknown>;
	/** What `stored` must equal for a text payload; by default the text as received, trimmed. */
	expected?: (received: string) => unknown;
	/** Further checks on a safe save (e.g. how the public page renders it). */
	check?: (outcome: Outcome, context: CaseContext, received: string) => Promise<void>;
}

export interface CaseContext {
	form: Record<string, FormValue>;
	params: Record<string, string>;
	/** Whatever `prepare` returned (ids of fresh fixtures). */
	fixture: Record<string, string>;
}

export interface FormSurface {
	name: string;
	action: (event: never) => unknown;
	/** The request path; `{param}` stands for a route parameter poisoned by a case. */
	path: string;
	user: () => SessionUser | null;
	/** Fresh fixtures for one case, when a save would change what the next case starts from. */
	prepare?: () => Promise<Record<string, string>>;
	params?: (fixture: Record<string, string>) => Record<string, string>;
	valid: (fixture: Record<string, string>) => Record<string, FormValue>;
	fields: FieldCases[];
	/** Tables a refusal may still write (counters of failed attempts). */
	allow?: readonly string[];
	/** Every case must be refused (e.g. an unknown token): a save would be a bug. */
	mustRefuse?: boolean;
}

/** Registers one test per (surface, field, payload), and the count and health check after them. */
export function hostileForms(
	file: string,
	db: () => Database,
	surfaces: () => FormSurface[],
	minimum: number
): void {
	const counter = new CaseCounter();
	beforeAll(() => trackRowCounts(db()));
	for (const surface of surfaces()) {
		describe(surface.name, () => {
			for (const cases of surface.fields) {
				for (const payload of cases.payloads) {
					it(`${cases.field} ← ${payload.id}`, async () => {
						const fixture = (await surface.prepare?.()) ?? {};
						const inParams = cases.in === 'params';
						const params = {
							...surface.params?.(fixture),
							// a decoded path segment is always well-formed UTF-16
							...(inParams ? { [cases.field]: String(payload.value).toWellFormed() } : {})
						};
						const form = inParams
							? surface.valid(fixture)
							: { ...surface.valid(fixture), [cases.field]: payload.value };
						const context: CaseContext = { form, params, fixture };
						const path = surface.path.replace(
							'{param}',
							encodeURIComponent(inParams ? String(payload.value).toWellFormed() : 'x')
						);
						const event = formEvent(path, surface.user(), form, params);
						// A route parameter comes through the hooks, whose first check refuses what no
						// route can read (src/lib/server/request-guard.ts).
						const run = inParams
							? () =>
									refuseUnreadableRequests({
										event,
										resolve: (e: never) => surface.action(e) as never
									} as never)
							: () => surface.action(event);
						await hostileCase(db, counter, run, {
							allow: surface.allow,
							mustRefuse: surface.mustRefuse,
							saved: async (outcome) => {
								if (typeof payload.value !== 'string') return;
								const received = asReceived(payload.value);
								if (cases.stored) {
									const expected = cases.expected ? cases.expected(received) : received.trim();
									expect(await cases.stored(outcome, context)).toEqual(expected);
								}
								await cases.check?.(outcome, context, received);
							}
						});
					});
				}
			}
		});
	}
	describe('after the batch', () => {
		it('/healthz still answers 200', expectHealthy);
		it('the row counts checked after each case were true counts', () => expectCountsTrue(db()));
		it(`ran at least ${minimum} cases`, () => {
			counter.report(file);
			expect(counter.total).toBeGreaterThanOrEqual(minimum);
		});
	});
}
