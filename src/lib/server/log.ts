import { AsyncLocalStorage } from 'node:async_hooks';
import { randomUUID } from 'node:crypto';
import type { Handle } from '@sveltejs/kit';
import pino, { type DestinationStream, type Logger } from 'pino';

/**
 * The app's log: one JSON object per line on standard output (pino), each with the id of the
 * request or background task it belongs to (`requestId`), so that a support question ("my gift
 * failed at 10:02") can be followed through every line of that request.
 *
 * What never goes in: secrets (passwords, tokens, cookies, keys, signatures), card data, and
 * positions (latitude/longitude of any kind) — they are removed by key wherever they appear in
 * the first levels of a logged object (`REDACTED_KEYS`), and the request line names the route
 * (`/preferences/[token]`), never the address with its token.
 *
 * `LOG_LEVEL` (trace, debug, info, warn, error, fatal, silent; default info).
 */

interface LogContext {
	requestId: string;
}

const context = new AsyncLocalStorage<LogContext>();

/** Keys removed from logged objects wherever they appear (a path per depth, pino's redact). */
export const REDACTED_KEYS = [
	'password',
	'passwordHash',
	'token',
	'secret',
	'apiKey',
	'authorization',
	'cookie',
	'set-cookie',
	'signature',
	'stripe-signature',
	'card',
	'cardNumber',
	'cvc',
	'lat',
	'lon',
	'lng',
	'latitude',
	'longitude',
	'coordinates',
	// a failed query's values (Drizzle puts them on the error)
	'params'
];

/** A failed query's message names its values after "params:"; they may be positions. */
function scrub(text: string | undefined): string | undefined {
	return text?.replace(/\bparams: [^\n]*/g, 'params: [removed]');
}

function errorSerializer(error: Error): Record<string, unknown> {
	const serialized = pino.stdSerializers.err(error) as unknown as Record<string, unknown>;
	for (const key of ['message', 'stack']) {
		if (typeof serialized[key] === 'string') serialized[key] = scrub(serialized[key] as string);
	}
	return serialized;
}

function redactPaths(): string[] {
	const paths: string[] = [];
	for (const key of REDACTED_KEYS) {
		const safe = /^[A-Za-z_$][\w$]*$/.test(key) ? key : `["${key}"]`;
		const join = (prefix: string) =>
			safe.startsWith('[') ? `${prefix}${safe}` : `${prefix}.${safe}`;
		paths.push(safe.startsWith('[') ? safe : key, join('*'), join('*.*'), join('*.*.*'));
	}
	return paths;
}

const LEVELS = new Set(['trace', 'debug', 'info', 'warn', 'error', 'fatal', 'silent']);

/** A logger writing to `destination` (standard output by default), with the redaction rules. */
export function createLogger(
	destination?: DestinationStream,
	level = (process.env.LOG_LEVEL ?? '').toLowerCase()
): Logger {
	return pino(
		{
			level: LEVELS.has(level) ? level : 'info',
			base: { app: 'tideward' },
			timestamp: pino.stdTimeFunctions.isoTime,
			redact: { paths: redactPaths(), censor: '[removed]' },
			serializers: { err: errorSerializer },
			mixin: () => {
				const current = context.getStore();
				return current ? { requestId: current.requestId } : {};
			}
		},
		destination
	);
}

const holder = globalThis as typeof globalThis & { __tidewardLog?: Logger };

/** The process's logger. */
export function log(): Logger {
	holder.__tidewardLog ??= createLogger();
	return holder.__tidewardLog;
}

/** Uses another logger (tests). */
export function setLogger(logger: Logger | undefined): void {
	holder.__tidewardLog = logger;
}

/** Runs `work` with `requestId` on every line it logs (a request, or one run of a task). */
export function withRequestId<T>(requestId: string, work: () => T): T {
	return context.run({ requestId }, work);
}

/** The id of the request or task being served, if any. */
export function currentRequestId(): string | undefined {
	return context.getStore()?.requestId;
}

/** A fresh id for a background task's run, e.g. `task-outbox-…`. */
export function taskId(name: string): string {
	return `task-${name}-${randomUUID().slice(0, 8)}`;
}

// An id from the proxy in front is kept when it looks like one (no line breaks or markup in logs).
const REQUEST_ID = /^[\w.:-]{1,64}$/;

/** Every request gets an id, on every log line made while serving it, and one line when done. */
export const logRequests: Handle = async ({ event, resolve }) => {
	const offered = event.request.headers.get('x-request-id');
	const id = offered && REQUEST_ID.test(offered) ? offered : randomUUID();
	event.locals.requestId = id;
	const started = performance.now();
	return withRequestId(id, async () => {
		const response = await resolve(event);
		// The route, not the address: addresses can hold tokens (e-mail links, unsubscribe).
		log().info(
			{
				method: event.request.method,
				route: event.route.id ?? null,
				status: response.status,
				ms: Math.round(performance.now() - started)
			},
			'request'
		);
		return response;
	});
};
