// The fake's HTTP face: msw handlers answering https://api.stripe.com/v1/… as the real API does
// for the endpoints the app uses — bearer-key auth, form-encoded parameters, `expand[]`,
// idempotency keys, list pagination and errors in the API's shape. Every other path under the
// host answers 404 "Unrecognized request URL", so nothing meant for the fake reaches the network.
import { http, HttpResponse, type HttpHandler } from 'msw';
import Stripe from 'stripe';
import type { FakeEngine, RequestInfo } from './engine';
import {
	ApiError,
	canonical,
	checkShape,
	expansions,
	integer,
	parseParams,
	text,
	type Params,
	type Shape
} from './form';
import type { FakeBalanceTransaction, FakeInvoice, FakeList } from './objects';
import { randomToken, type ApiObject, type FakeStore } from './state';
import { log } from '$lib/server/log';

/** The API key the app uses in fake mode (`new Stripe(FAKE_SECRET_KEY)`). */
export const FAKE_SECRET_KEY = 'sk_test_tideward_fake';

interface Context {
	params: Params;
	path: string[];
	request: RequestInfo;
}

type Handler = (c: Context) => unknown;

interface Route {
	method: 'GET' | 'POST' | 'DELETE';
	pattern: RegExp;
	handle: Handler;
}

type Filter = (item: ApiObject, value: string) => boolean;

const field =
	(name: string): Filter =>
	(item, value) => {
		const v = item[name];
		return (typeof v === 'string' ? v : (v as { id?: string } | null)?.id) === value;
	};

function paginate<T extends ApiObject>(
	items: T[],
	params: Params,
	url: string,
	type: string
): FakeList<T> {
	const limit = integer(params, 'limit', '', { min: 1, max: 100 }) ?? 10;
	const after = text(params, 'starting_after');
	const before = text(params, 'ending_before');
	if (after && before) {
		throw ApiError.invalid(
			'You may only specify one of these parameters: ending_before, starting_after.'
		);
	}
	let start = 0;
	let end = items.length;
	if (after) {
		const index = items.findIndex((i) => i.id === after);
		if (index === -1) throw ApiError.invalid(`No such ${type}: '${after}'`, 'starting_after');
		start = index + 1;
	}
	if (before) {
		const index = items.findIndex((i) => i.id === before);
		if (index === -1) throw ApiError.invalid(`No such ${type}: '${before}'`, 'ending_before');
		end = index;
		start = Math.max(0, end - limit);
		return { object: 'list', data: items.slice(start, end), has_more: start > 0, url };
	}
	return {
		object: 'list',
		data: items.slice(start, start + limit),
		has_more: start + limit < end,
		url
	};
}

function createdFilter(params: Params): (item: ApiObject) => boolean {
	const created = params.created;
	delete params.created;
	if (created === undefined) return () => true;
	if (typeof created === 'string') {
		const at = integer({ created }, 'created');
		return (item) => item.created === at;
	}
	if (Array.isArray(created)) throw ApiError.invalid('Invalid created filter.', 'created');
	checkShape(created, { gt: 'scalar', gte: 'scalar', lt: 'scalar', lte: 'scalar' }, 'created');
	const bound = (k: string) => integer(created, k, 'created', { min: 0, max: 9_999_999_999 });
	const [gt, gte, lt, lte] = ['gt', 'gte', 'lt', 'lte'].map(bound);
	return (item) => {
		const c = item.created as number;
		return (
			(gt === undefined || c > gt) &&
			(gte === undefined || c >= gte) &&
			(lt === undefined || c < lt) &&
			(lte === undefined || c <= lte)
		);
	};
}

function maskKey(key: string): string {
	if (key.length <= 12) return key.replace(/./g, '*');
	const prefix = /^(sk|rk|pk)_(test|live)_/.exec(key)?.[0] ?? '';
	return `${prefix}${'*'.repeat(Math.max(4, key.length - prefix.length - 4))}${key.slice(-4)}`;
}

function apiKey(header: string | null): string | null {
	if (!header) return null;
	const [scheme, value] = header.split(/\s+/, 2);
	if (/^bearer$/i.test(scheme)) return value ?? '';
	if (/^basic$/i.test(scheme)) {
		return Buffer.from(value ?? '', 'base64')
			.toString('utf8')
			.split(':')[0];
	}
	return null;
}

export function stripeHandlers(engine: FakeEngine, store: FakeStore): HttpHandler[] {
	const routes: Route[] = [];
	const route = (method: Route['method'], path: string, handle: Handler) => {
		const pattern = new RegExp(`^${path.replace(/:[a-z]+/g, '([^/]+)')}$`);
		routes.push({ method, pattern, handle });
	};
	const expandOnly: { [key: string]: Shape } = { expand: 'list' };

	const retrieve =
		(type: string): Handler =>
		({ params, path }) => {
			checkShape(params, expandOnly);
			return engine.expand(engine.render(engine.find(type, path[0])), expansions(params));
		};

	const listOf =
		(
			type: string,
			url: string,
			filters: Record<string, Filter> = {},
			source: (params: Params) => ApiObject[] = () => store.all(type),
			defaults: (items: ApiObject[], params: Params) => ApiObject[] = (items) => items
		): Handler =>
		({ params }) => {
			const inCreated = createdFilter(params);
			const shape: { [key: string]: Shape } = {
				limit: 'scalar',
				starting_after: 'scalar',
				ending_before: 'scalar',
				expand: 'list'
			};
			for (const name of Object.keys(filters)) shape[name] = 'scalar';
			checkShape(params, shape);
			let items = defaults(source(params), params).filter(inCreated);
			for (const [name, test] of Object.entries(filters)) {
				const value = text(params, name);
				if (value !== undefined) items = items.filter((item) => test(item, value));
			}
			const page = paginate(items, params, url, type);
			page.data = page.data.map((item) => engine.render(item));
			return engine.expand(page, expansions(params));
		};

	// Checkout
	route('POST', '/v1/checkout/sessions', ({ params, request }) =>
		engine.expand(engine.createCheckoutSession(params, request) as ApiObject, expansions(params))
	);
	route(
		'GET',
		'/v1/checkout/sessions',
		listOf('checkout.session', '/v1/checkout/sessions', {
			payment_intent: field('payment_intent'),
			subscription: field('subscription'),
			customer: field('customer'),
			status: field('status')
		})
	);
	route('GET', '/v1/checkout/sessions/:id', retrieve('checkout.session'));
	route('GET', '/v1/checkout/sessions/:id/line_items', ({ params, path }) => {
		engine.find('checkout.session', path[0]);
		checkShape(params, {
			limit: 'scalar',
			starting_after: 'scalar',
			ending_before: 'scalar',
			expand: 'list'
		});
		const url = `/v1/checkout/sessions/${path[0]}/line_items`;
		const items = engine.sessionLineItems(path[0]).data as unknown as ApiObject[];
		return engine.expand(paginate(items, params, url, 'item'), expansions(params));
	});
	route('POST', '/v1/checkout/sessions/:id/expire', ({ params, path, request }) => {
		checkShape(params, expandOnly);
		return engine.expand(engine.expireSession(path[0], request) as ApiObject, expansions(params));
	});

	// Subscriptions and the billing portal
	route('GET', '/v1/subscriptions/:id', retrieve('subscription'));
	route('POST', '/v1/subscriptions/:id', ({ params, path, request }) =>
		engine.expand(
			engine.updateSubscription(path[0], params, request) as ApiObject,
			expansions(params)
		)
	);
	route('DELETE', '/v1/subscriptions/:id', ({ params, path, request }) =>
		engine.expand(
			engine.cancelSubscriptionNow(path[0], params, request) as ApiObject,
			expansions(params)
		)
	);
	route(
		'GET',
		'/v1/subscriptions',
		listOf(
			'subscription',
			'/v1/subscriptions',
			{
				customer: field('customer'),
				status: (item, value) => value === 'all' || item.status === value
			},
			() => store.all('subscription'),
			// Without a status filter the API leaves canceled subscriptions out.
			(items, params) =>
				text(params, 'status') ? items : items.filter((s) => s.status !== 'canceled')
		)
	);
	route('POST', '/v1/billing_portal/sessions', ({ params, request }) =>
		engine.expand(engine.createPortalSession(params, request) as ApiObject, expansions(params))
	);

	// Payments
	route('GET', '/v1/payment_intents/:id', retrieve('payment_intent'));
	route(
		'GET',
		'/v1/payment_intents',
		listOf('payment_intent', '/v1/payment_intents', { customer: field('customer') })
	);
	route('GET', '/v1/charges/:id', retrieve('charge'));
	route(
		'GET',
		'/v1/charges',
		listOf('charge', '/v1/charges', {
			customer: field('customer'),
			payment_intent: field('payment_intent')
		})
	);
	route('POST', '/v1/refunds', ({ params, request }) =>
		engine.expand(engine.createRefund(params, request) as ApiObject, expansions(params))
	);
	route('GET', '/v1/refunds/:id', retrieve('refund'));
	route(
		'GET',
		'/v1/refunds',
		listOf('refund', '/v1/refunds', {
			charge: field('charge'),
			payment_intent: field('payment_intent')
		})
	);
	route('GET', '/v1/disputes/:id', retrieve('dispute'));
	route(
		'GET',
		'/v1/disputes',
		listOf('dispute', '/v1/disputes', {
			charge: field('charge'),
			payment_intent: field('payment_intent')
		})
	);
	route('GET', '/v1/customers/:id', retrieve('customer'));
	route('GET', '/v1/payment_methods/:id', retrieve('payment_method'));
	route('GET', '/v1/prices/:id', retrieve('price'));
	route('GET', '/v1/products/:id', retrieve('product'));

	// Invoices
	route('GET', '/v1/invoices/:id', retrieve('invoice'));
	route(
		'GET',
		'/v1/invoices',
		listOf('invoice', '/v1/invoices', {
			customer: field('customer'),
			status: field('status'),
			subscription: (item, value) =>
				(item as unknown as FakeInvoice).parent?.subscription_details?.subscription === value
		})
	);
	route('GET', '/v1/invoice_payments/:id', retrieve('invoice_payment'));
	route(
		'GET',
		'/v1/invoice_payments',
		listOf('invoice_payment', '/v1/invoice_payments', {
			invoice: field('invoice'),
			status: field('status')
		})
	);

	// Balance and payouts
	route('GET', '/v1/balance', ({ params }) => {
		checkShape(params, expandOnly);
		return engine.balance();
	});
	route('GET', '/v1/balance_transactions/:id', retrieve('balance_transaction'));
	route(
		'GET',
		'/v1/balance_transactions',
		listOf(
			'balance_transaction',
			'/v1/balance_transactions',
			{
				payout: () => true, // applied by the source below
				type: field('type'),
				source: field('source'),
				currency: field('currency')
			},
			(params) => {
				const payout = text(params, 'payout');
				return payout
					? engine.payoutTransactions(payout)
					: store.all<FakeBalanceTransaction & ApiObject>('balance_transaction');
			}
		)
	);
	route('POST', '/v1/payouts', ({ params, request }) =>
		engine.expand(engine.createManualPayout(params, request) as ApiObject, expansions(params))
	);
	route('GET', '/v1/payouts/:id', retrieve('payout'));
	route('GET', '/v1/payouts', listOf('payout', '/v1/payouts', { status: field('status') }));

	// Events
	route('GET', '/v1/events/:id', retrieve('event'));
	route('GET', '/v1/events', listOf('event', '/v1/events', { type: field('type') }));

	async function respond(request: Request): Promise<Response> {
		const url = new URL(request.url);
		const method = request.method.toUpperCase();
		const requestId = `req_${randomToken(14)}`;
		const headers: Record<string, string> = {
			'request-id': requestId,
			'stripe-version': request.headers.get('stripe-version') ?? Stripe.API_VERSION
		};
		const reply = (status: number, body: unknown, extra: Record<string, string> = {}) =>
			HttpResponse.json(body as Record<string, unknown>, {
				status,
				headers: { ...headers, ...extra }
			});

		const key = apiKey(request.headers.get('authorization'));
		if (key === null || key === '') {
			return reply(401, {
				error: {
					type: 'invalid_request_error',
					message:
						"You did not provide an API key. You need to provide your API key in the Authorization header, using Bearer auth (e.g. 'Authorization: Bearer YOUR_SECRET_KEY')."
				}
			});
		}
		if (key !== FAKE_SECRET_KEY) {
			return reply(401, {
				error: {
					type: 'invalid_request_error',
					code: 'api_key_invalid',
					message: `Invalid API Key provided: ${maskKey(key)}`
				}
			});
		}

		const found = routes
			.filter((r) => r.method === method)
			.map((r) => ({ r, m: r.pattern.exec(url.pathname) }))
			.find((x) => x.m);
		if (!found) {
			return reply(404, {
				error: {
					type: 'invalid_request_error',
					message: `Unrecognized request URL (${method}: ${url.pathname}). The local test service answers only the endpoints the app uses.`
				}
			});
		}

		const idempotencyKey = method === 'POST' ? request.headers.get('idempotency-key') : null;
		if (idempotencyKey !== null) headers['idempotency-key'] = idempotencyKey;
		let params: Params;
		try {
			params = parseParams(method === 'POST' ? await request.text() : url.search.slice(1));
		} catch (error) {
			if (error instanceof ApiError) return reply(error.status, { error: error.body });
			throw error;
		}
		const fingerprint = canonical(params);
		if (idempotencyKey !== null) {
			if (idempotencyKey.length > 255) {
				return reply(400, {
					error: {
						type: 'invalid_request_error',
						message: 'Idempotency-Key must be at most 255 characters long.'
					}
				});
			}
			store.pruneIdempotency();
			const previous = store.state.idempotency[idempotencyKey];
			if (previous) {
				if (previous.method !== method || previous.path !== url.pathname) {
					return reply(400, {
						error: {
							type: 'idempotency_error',
							message: `Keys for idempotent requests can only be used for the same endpoint they were first used for ('${previous.method} ${previous.path}' vs '${method} ${url.pathname}'). Try using a key other than '${idempotencyKey}' if you meant to execute a different request.`
						}
					});
				}
				if (previous.params !== fingerprint) {
					return reply(400, {
						error: {
							type: 'idempotency_error',
							message: `Keys for idempotent requests can only be used with the same parameters they were first used with. Try using a key other than '${idempotencyKey}' if you meant to execute a different request.`
						}
					});
				}
				return reply(previous.status, previous.body, { 'idempotent-replayed': 'true' });
			}
		}

		let status = 200;
		let body: unknown;
		try {
			engine.tick();
			body = found.r.handle({
				params,
				path: found.m!.slice(1).map(decodeURIComponent),
				request: { id: requestId, idempotencyKey }
			});
		} catch (error) {
			if (error instanceof ApiError) {
				status = error.status;
				body = { error: error.body };
			} else {
				log().error({ err: error }, 'local payment service: unexpected error');
				status = 500;
				body = {
					error: {
						type: 'api_error',
						message: `The local test service failed: ${(error as Error).message}`
					}
				};
			}
		}
		// As the real API: results are kept for a key once the request ran (success or a card
		// error), not when its parameters were refused.
		if (idempotencyKey !== null && (status < 300 || status === 402)) {
			store.state.idempotency[idempotencyKey] = {
				method,
				path: url.pathname,
				params: fingerprint,
				status,
				body,
				storedAt: Date.now()
			};
			store.save();
		}
		return reply(status, body);
	}

	return [http.all('https://api.stripe.com/*', ({ request }) => respond(request))];
}
