// Hostile input through the JSON and file endpoints and the page loads that read the address:
// route parameters, query strings, the processor's webhook (bad signatures and bodies), the
// one-click unsubscribe, and the Newsroom's markdown preview (OWASP XSS payloads must come back
// without live markup). Everything passes the hooks' request guard first, as in the app.
import Stripe from 'stripe';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { readSession } from '$lib/server/auth/session';
import { patients } from '$lib/server/db/schema';
import { refuseUnreadableRequests } from '$lib/server/request-guard';
import { signingKey, unsubscribeToken } from '$lib/server/updates/tokens';
import { GET as sessionApi } from '../../../src/routes/api/adoptions/session/[id]/+server';
import { GET as closeCsv } from '../../../src/routes/api/ledger/close.csv/+server';
import { GET as giftsCsv } from '../../../src/routes/api/ledger/gifts.csv/+server';
import { GET as giftsApi } from '../../../src/routes/api/ledger/gifts/+server';
import { GET as patientsApi } from '../../../src/routes/api/patients/+server';
import { GET as patientApi } from '../../../src/routes/api/patients/[slug]/+server';
import { GET as journeyApi } from '../../../src/routes/api/patients/[slug]/journey/+server';
import { GET as occurrencesApi } from '../../../src/routes/api/patients/[slug]/occurrences.csv/+server';
import { GET as storiesApi } from '../../../src/routes/api/stories/+server';
import { GET as trackApi } from '../../../src/routes/api/tracking/[slug]/[which]/+server';
import {
	GET as unsubscribeGet,
	POST as unsubscribePost
} from '../../../src/routes/api/unsubscribe/[token]/+server';
import { load as giftPageLoad } from '../../../src/routes/gifts/[token]/+page.server';
import { GET as mediaFile } from '../../../src/routes/media/[id]/[file]/+server';
import { GET as patientCard } from '../../../src/routes/og/patients/[slug].png/+server';
import { GET as storyCard } from '../../../src/routes/og/stories/[slug].png/+server';
import { load as patientsPageLoad } from '../../../src/routes/patients/+page.server';
import { load as patientPageLoad } from '../../../src/routes/patients/[slug]/+page.server';
import { load as adoptPageLoad } from '../../../src/routes/patients/[slug]/adopt/+page.server';
import { GET as journeyPng } from '../../../src/routes/patients/[slug]/journey.png/+server';
import { load as preferencesPageLoad } from '../../../src/routes/preferences/[token]/+page.server';
import { load as resetPageLoad } from '../../../src/routes/reset/[token]/+page.server';
import { load as signinPageLoad } from '../../../src/routes/signin/+page.server';
import { load as linkPageLoad } from '../../../src/routes/signin/link/[token]/+page.server';
import { load as closePageLoad } from '../../../src/routes/staff/ledger/close/+page.server';
import { load as giftsPageLoad } from '../../../src/routes/staff/ledger/gifts/+page.server';
import { load as payoutPageLoad } from '../../../src/routes/staff/ledger/payouts/[id]/+page.server';
import { load as statementsPageLoad } from '../../../src/routes/staff/ledger/statements/+page.server';
import { load as supporterPageLoad } from '../../../src/routes/staff/ledger/supporters/[email]/+page.server';
import { load as mailPageLoad } from '../../../src/routes/staff/mail/+page.server';
import { load as templatesPageLoad } from '../../../src/routes/staff/mail/templates/+page.server';
import { load as patientDeskLoad } from '../../../src/routes/staff/newsroom/patients/[id]/+page.server';
import { POST as previewMarkdown } from '../../../src/routes/staff/newsroom/preview/+server';
import { load as storyDeskLoad } from '../../../src/routes/staff/newsroom/stories/[id]/+page.server';
import { load as outboxPageLoad } from '../../../src/routes/staff/outbox/+page.server';
import { load as trackingPageLoad } from '../../../src/routes/staff/tracking/[slug]/+page.server';
import { load as storiesPageLoad } from '../../../src/routes/stories/+page.server';
import { load as storyPageLoad } from '../../../src/routes/stories/[slug]/+page.server';
import { useTestDatabase } from '../../setup/test-db';
import { postWebhook, startTestProcessor, type TestProcessor } from '../fake-processor';
import { people } from '../newsroom-helpers';
import { publicEvent } from '../public-event';
import {
	CaseCounter,
	expectCountsTrue,
	expectHealthy,
	hostileCase,
	liveMarkup,
	trackRowCounts
} from './harness';
import {
	FIELD_PAYLOADS,
	OVERSIZED,
	PARAMS,
	SQL_LIKE,
	UNICODE,
	XSS,
	type Payload
} from './payloads';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);
const counter = new CaseCounter();
let processor: TestProcessor;
let staff: SessionUser;
const SLUG = 'hostile-api';
const MBYTE = 1024 * 1024;

beforeAll(async () => {
	processor = await startTestProcessor('hostile-apis');
	staff = await person(['admin', 'development', 'tracker', 'educator']);
	await db().insert(patients).values({
		id: crypto.randomUUID(),
		slug: SLUG,
		name: 'Api',
		species: 'hawksbill',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'fishing_hook_or_line',
		status: 'in_rehabilitation'
	});
	await signingKey();
	await trackRowCounts(db());
});

afterAll(() => processor?.stop());

/** A value as it arrives in a decoded route parameter or query value: well-formed UTF-16. */
const decoded = (value: string) => value.toWellFormed();

/** A GET for `path` (already encoded) by `user`, through the request guard of the hooks. */
function get(
	handler: (event: never) => unknown,
	path: string,
	params: Record<string, string>,
	user: SessionUser | null = null,
	method = 'GET',
	body?: BodyInit
) {
	const event = publicEvent(path, params) as unknown as { url: URL };
	const withUser = {
		...event,
		locals: { user, session: null, requestId: 'test' },
		request: new Request(event.url, { method, body })
	};
	return () =>
		refuseUnreadableRequests({
			event: withUser,
			resolve: (e: never) => handler(e) as never
		} as never);
}

const paramValues = PARAMS;
const queryValues: Payload[] = [...FIELD_PAYLOADS, SQL_LIKE[4], XSS[1], UNICODE[1]];

interface ParamSurface {
	name: string;
	handler: (event: never) => unknown;
	/** the path for a parameter value, and the parameters the route would get */
	at: (value: string) => { path: string; params: Record<string, string> };
	user?: () => SessionUser | null;
	/** a hostile value never names anything here: every case is a 4xx */
	mustRefuse?: boolean;
}

const seg = (value: string) => encodeURIComponent(decoded(value));

const paramSurfaces: ParamSurface[] = [
	...(
		[
			['GET /api/patients/[slug]', patientApi, (v: string) => `/api/patients/${v}`],
			['GET /api/patients/[slug]/journey', journeyApi, (v: string) => `/api/patients/${v}/journey`],
			[
				'GET /api/patients/[slug]/occurrences.csv',
				occurrencesApi,
				(v: string) => `/api/patients/${v}/occurrences.csv`
			],
			['GET /og/patients/[slug].png', patientCard, (v: string) => `/og/patients/${v}.png`],
			['GET /og/stories/[slug].png', storyCard, (v: string) => `/og/stories/${v}.png`],
			['GET /patients/[slug]/journey.png', journeyPng, (v: string) => `/patients/${v}/journey.png`],
			['page /patients/[slug]', patientPageLoad, (v: string) => `/patients/${v}`],
			['page /patients/[slug]/adopt', adoptPageLoad, (v: string) => `/patients/${v}/adopt`],
			['page /stories/[slug]', storyPageLoad, (v: string) => `/stories/${v}`]
		] as const
	).map(([name, handler, path]) => ({
		name,
		handler,
		mustRefuse: true,
		at: (v: string) => ({ path: path(seg(v)), params: { slug: decoded(v) } })
	})),
	{
		name: 'GET /api/adoptions/session/[id]',
		handler: sessionApi,
		mustRefuse: true,
		at: (v) => ({ path: `/api/adoptions/session/${seg(v)}`, params: { id: decoded(v) } })
	},
	{
		name: 'GET /api/unsubscribe/[token]',
		handler: unsubscribeGet,
		mustRefuse: true,
		at: (v) => ({ path: `/api/unsubscribe/${seg(v)}`, params: { token: decoded(v) } })
	},
	{
		name: 'GET /media/[id]/[file]: id',
		handler: mediaFile,
		mustRefuse: true,
		at: (v) => ({ path: `/media/${seg(v)}/960.webp`, params: { id: decoded(v), file: '960.webp' } })
	},
	{
		name: 'GET /media/[id]/[file]: file',
		handler: mediaFile,
		mustRefuse: true,
		at: (v) => ({ path: `/media/abc/${seg(v)}`, params: { id: 'abc', file: decoded(v) } })
	},
	...(
		[
			['page /preferences/[token]', preferencesPageLoad, 'preferences'],
			['page /gifts/[token]', giftPageLoad, 'gifts'],
			['page /reset/[token]', resetPageLoad, 'reset'],
			['page /signin/link/[token]', linkPageLoad, 'signin/link']
		] as const
	).map(([name, handler, prefix]) => ({
		name,
		handler,
		at: (v: string) => ({ path: `/${prefix}/${seg(v)}`, params: { token: decoded(v) } })
	})),
	...(
		[
			[
				'GET /api/tracking/[slug]/raw',
				trackApi,
				(v: string) => `/api/tracking/${v}/raw`,
				{ which: 'raw' }
			],
			['page /staff/tracking/[slug]', trackingPageLoad, (v: string) => `/staff/tracking/${v}`, {}],
			[
				'page /staff/newsroom/patients/[id]',
				patientDeskLoad,
				(v: string) => `/staff/newsroom/patients/${v}`,
				{}
			],
			[
				'page /staff/newsroom/stories/[id]',
				storyDeskLoad,
				(v: string) => `/staff/newsroom/stories/${v}`,
				{}
			],
			[
				'page /staff/ledger/payouts/[id]',
				payoutPageLoad,
				(v: string) => `/staff/ledger/payouts/${v}`,
				{}
			],
			[
				'page /staff/ledger/supporters/[email]',
				supporterPageLoad,
				(v: string) => `/staff/ledger/supporters/${v}`,
				{}
			]
		] as const
	).map(([name, handler, path, extra]) => ({
		name,
		handler,
		user: () => staff,
		mustRefuse: true,
		at: (v: string) => {
			const key = name.match(/\[(\w+)\]/)![1];
			return { path: path(seg(v)), params: { ...extra, [key]: decoded(v) } };
		}
	})),
	{
		name: 'GET /api/tracking/[slug]/[which]: which',
		handler: trackApi,
		user: () => staff,
		mustRefuse: true,
		at: (v) => ({
			path: `/api/tracking/${SLUG}/${seg(v)}`,
			params: { slug: SLUG, which: decoded(v) }
		})
	}
];

describe('route parameters', () => {
	for (const surface of paramSurfaces) {
		describe(surface.name, () => {
			for (const payload of paramValues) {
				it(payload.id, async () => {
					const { path, params } = surface.at(payload.value);
					await hostileCase(
						db,
						counter,
						get(surface.handler, path, params, surface.user?.() ?? null),
						{
							mustRefuse: surface.mustRefuse
						}
					);
				});
			}
		});
	}
});

interface QuerySurface {
	name: string;
	handler: (event: never) => unknown;
	path: string;
	params?: Record<string, string>;
	keys: string[];
	user?: () => SessionUser | null;
	values?: Payload[];
}

const querySurfaces: QuerySurface[] = [
	{
		name: 'GET /api/patients',
		handler: patientsApi,
		path: '/api/patients',
		keys: ['species', 'status', 'q']
	},
	{ name: 'page /patients', handler: patientsPageLoad, path: '/patients', keys: ['species', 'q'] },
	{
		name: 'GET /api/stories',
		handler: storiesApi,
		path: '/api/stories',
		keys: ['patient', 'kind', 'limit', 'before']
	},
	{ name: 'page /stories', handler: storiesPageLoad, path: '/stories', keys: ['kind', 'before'] },
	{
		name: 'page /signin',
		handler: signinPageLoad,
		path: '/signin',
		keys: ['redirectTo'],
		values: [
			...queryValues,
			{ id: 'other site', value: '//evil.example' },
			{ id: 'tab', value: '/\t/evil.example' }
		]
	},
	...(
		[
			[
				'GET /api/ledger/gifts',
				giftsApi,
				'/api/ledger/gifts',
				[
					'from',
					'to',
					'patient',
					'level',
					'interval',
					'status',
					'q',
					'sort',
					'dir',
					'page',
					'pageSize'
				]
			],
			['GET /api/ledger/gifts.csv', giftsCsv, '/api/ledger/gifts.csv', ['from', 'q', 'patient']],
			['GET /api/ledger/close.csv', closeCsv, '/api/ledger/close.csv', ['year']],
			['GET /api/tracking/[slug]/raw', trackApi, `/api/tracking/${SLUG}/raw`, ['format']],
			['page /staff/ledger/gifts', giftsPageLoad, '/staff/ledger/gifts', ['from', 'q', 'page']],
			['page /staff/ledger/close', closePageLoad, '/staff/ledger/close', ['year']],
			['page /staff/ledger/statements', statementsPageLoad, '/staff/ledger/statements', ['year']],
			['page /staff/outbox', outboxPageLoad, '/staff/outbox', ['status', 'page']],
			['page /staff/mail', mailPageLoad, '/staff/mail', ['page']],
			['page /staff/mail/templates', templatesPageLoad, '/staff/mail/templates', ['template']]
		] as const
	).map(([name, handler, path, keys]) => ({
		name,
		handler,
		path,
		keys: [...keys],
		params: { slug: SLUG, which: 'raw' },
		user: () => staff
	}))
];

describe('query strings', () => {
	for (const surface of querySurfaces) {
		describe(surface.name, () => {
			for (const key of surface.keys) {
				for (const payload of surface.values ?? queryValues) {
					it(`${key} ← ${payload.id}`, async () => {
						const query = `${key}=${encodeURIComponent(decoded(payload.value))}`;
						await hostileCase(
							db,
							counter,
							get(
								surface.handler,
								`${surface.path}?${query}`,
								surface.params ?? {},
								surface.user?.() ?? null
							)
						);
					});
				}
				it(`${key} given twice`, async () => {
					await hostileCase(
						db,
						counter,
						get(
							surface.handler,
							`${surface.path}?${key}=a&${key}=b`,
							surface.params ?? {},
							surface.user?.() ?? null
						)
					);
				});
			}
		});
	}
	it('the sign-in page never offers a hostile place to return to', async () => {
		for (const target of ['//evil.example', '/\t/evil.example', '/\\evil.example', '/🐢']) {
			const data = (await signinPageLoad(
				publicEvent(`/signin?redirectTo=${encodeURIComponent(target)}`) as never
			)) as { redirectTo: string };
			expect(data.redirectTo, target).toBe('');
		}
	});
});

describe('the Newsroom’s markdown preview', () => {
	const preview = (body: string, user: SessionUser | null = staff) =>
		get(previewMarkdown, '/staff/newsroom/preview', {}, user, 'POST', body);
	// every XSS payload, as markdown and inside markdown constructs
	const markdown = XSS.flatMap((p) => [
		{ id: p.id, value: p.value },
		{ id: `${p.id} in a link`, value: `[x](${p.value})` },
		{ id: `${p.id} in a heading`, value: `# ${p.value}` }
	]);
	for (const payload of markdown) {
		it(`renders without live markup: ${payload.id}`, async () => {
			await hostileCase(db, counter, preview(JSON.stringify({ markdown: payload.value })), {
				saved: async (outcome) => {
					const { html } = await (outcome as { response: Response }).response.json();
					expect(liveMarkup(html), html).toBeNull();
				}
			});
		});
	}
	const bodies: [string, string][] = [
		['not JSON', '{"markdown": '],
		['a number', '{"markdown": 42}'],
		['an array', '[1,2]'],
		['null', 'null'],
		['too long', JSON.stringify({ markdown: OVERSIZED[1].value })],
		['empty', ''],
		['prototype keys', '{"__proto__":{"markdown":"x"}}']
	];
	for (const [id, body] of bodies) {
		it(`refuses ${id}`, async () => {
			await hostileCase(db, counter, preview(body), { mustRefuse: true });
		});
	}
});

describe('the processor’s webhook', () => {
	const sign = (payload: string, secret = processor.fake.webhookSecret, timestamp?: number) =>
		Stripe.webhooks.generateTestHeaderString({ payload, secret, timestamp });
	const event = JSON.stringify({
		id: 'evt_hostile_1',
		object: 'event',
		type: 'checkout.session.completed',
		created: Math.floor(Date.now() / 1000),
		data: { object: { id: 'cs_test_x', object: 'checkout.session', metadata: {} } }
	});
	const cases: [string, () => [string, string | null]][] = [
		['no signature', () => [event, null]],
		['an empty signature', () => [event, '']],
		['a garbage signature', () => [event, 't=1,v1=deadbeef']],
		['the wrong secret', () => [event, sign(event, 'whsec_not_ours')]],
		[
			'a stale signature',
			() => [event, sign(event, undefined, Math.floor(Date.now() / 1000) - 3600)]
		],
		['a tampered body', () => [event.replace('cs_test_x', 'cs_test_y'), sign(event)]],
		['a 1 MB signature header', () => [event, `t=1,v1=${'a'.repeat(MBYTE)}`]],
		['garbage, signed', () => ['\u0000\u0001 not json', sign('\u0000\u0001 not json')]],
		['an empty body, signed', () => ['', sign('')]],
		['JSON that is not an event, signed', () => ['[1,2,3]', sign('[1,2,3]')]],
		[
			'an event without data, signed',
			() => ['{"id":"evt_1","type":"x","created":1}', sign('{"id":"evt_1","type":"x","created":1}')]
		],
		[
			'an event with a NUL in its id, signed',
			() => {
				const body = event.replace('evt_hostile_1', 'evt_\\u0000');
				return [body, sign(body)];
			}
		],
		[
			'an event from the year 275760, signed',
			() => {
				const body = event.replace(/"created":\d+/, '"created":8640000000001');
				return [body, sign(body)];
			}
		],
		[
			'an event with markup in its type, signed',
			() => {
				const body = event.replace('checkout.session.completed', '<script>alert(1)</script>');
				return [body, sign(body)];
			}
		]
	];
	for (const [id, make] of cases) {
		it(`refuses ${id}`, async () => {
			const [body, signature] = make();
			await hostileCase(db, counter, () => postWebhook(body, signature), { mustRefuse: true });
		});
	}
	it('records an unknown but well-formed signed event once, and changes nothing else', async () => {
		const body = event.replace('checkout.session.completed', 'hostile.unknown_type');
		await hostileCase(db, counter, () => postWebhook(body, sign(body)), {
			saved: async (outcome) => {
				expect(await (outcome as { response: Response }).response.json()).toEqual({
					received: true,
					outcome: 'ignored'
				});
			}
		});
	});
});

describe('the one-click unsubscribe', () => {
	const cases: [string, string][] = [
		...PARAMS.map((p) => [p.id, p.value] as [string, string]),
		[
			'right shape, forged signature',
			`${Buffer.from('["a@example.test","waypoint"]').toString('base64url')}.${'A'.repeat(43)}`
		],
		['2 KB token', 'a'.repeat(2049)]
	];
	for (const [id, token] of cases) {
		it(`refuses POST with ${id}`, async () => {
			await hostileCase(
				db,
				counter,
				get(
					unsubscribePost,
					`/api/unsubscribe/${seg(token)}`,
					{ token: decoded(token) },
					null,
					'POST',
					'List-Unsubscribe=One-Click'
				),
				{ mustRefuse: true }
			);
		});
	}
	it('accepts a real token once more (a safe save)', async () => {
		const token = unsubscribeToken(await signingKey(), {
			email: 'Reader@Example.test',
			category: 'waypoint'
		});
		await hostileCase(
			db,
			counter,
			get(
				unsubscribePost,
				`/api/unsubscribe/${token}`,
				{ token },
				null,
				'POST',
				'List-Unsubscribe=One-Click'
			)
		);
	});
});

describe('forged session cookies', () => {
	const values = [...PARAMS, { id: 'upper case', value: 'ABCDEFGHIJKLMNOP' }];
	for (const payload of values) {
		it(`are ignored: ${payload.id}`, async () => {
			const cookies = {
				get: () => payload.value,
				set: () => {}
			} as unknown as Parameters<typeof readSession>[0];
			await hostileCase(db, counter, () => readSession(cookies, new URL('http://localhost/')), {
				saved: async (outcome) => expect(outcome).toMatchObject({ data: { user: null } })
			});
		});
	}
});

describe('after the batch', () => {
	it('/healthz still answers 200', expectHealthy);
	it('the row counts checked after each case were true counts', () => expectCountsTrue(db()));
	it('ran at least 400 cases', () => {
		counter.report('apis');
		expect(counter.total).toBeGreaterThanOrEqual(400);
	});
});
