import { Writable } from 'node:stream';
import { afterEach, describe, expect, it } from 'vitest';
import { createLogger, logRequests, setLogger, withRequestId } from './log';

/** A logger whose lines are kept, parsed, for the test to read. */
function capture() {
	const lines: Record<string, unknown>[] = [];
	const stream = new Writable({
		write(chunk, _encoding, done) {
			for (const line of String(chunk).split('\n').filter(Boolean)) lines.push(JSON.parse(line));
			done();
		}
	});
	return { logger: createLogger(stream, 'info'), lines };
}

afterEach(() => setLogger(undefined));

describe('log lines', () => {
	it('are JSON with the request id of the request they were made in', async () => {
		const { logger, lines } = capture();
		await withRequestId('req-1', async () => {
			await Promise.resolve();
			logger.info({ patient: 'perla' }, 'inside');
		});
		logger.info('outside');
		expect(lines[0]).toMatchObject({ msg: 'inside', requestId: 'req-1', patient: 'perla' });
		expect(lines[0].time).toMatch(/^\d{4}-\d\d-\d\dT/);
		expect(lines[1].msg).toBe('outside');
		expect(lines[1]).not.toHaveProperty('requestId');
	});

	it('never hold secrets, card data or positions, at any of the first levels', () => {
		const { logger, lines } = capture();
		logger.info(
			{
				password: 'hunter2hunter2',
				user: { email: 'a@b.test', token: 'tok_123' },
				headers: { cookie: 'tideward_session=abc', 'stripe-signature': 't=1,v1=ff' },
				payment: { card: { cardNumber: '4242424242424242', cvc: '123' } },
				fix: { lat: 18.2, lon: -66.5 },
				deep: { track: { point: { latitude: 18.2, longitude: -66.5 } } },
				kept: { distanceKm: 12 }
			},
			'sensitive'
		);
		const text = JSON.stringify(lines[0]);
		for (const secret of ['hunter2', 'tok_123', 'abc', 'v1=ff', '4242', '123"', '18.2', '66.5']) {
			expect(text, secret).not.toContain(secret);
		}
		expect(lines[0]).toMatchObject({ user: { email: 'a@b.test' }, kept: { distanceKm: 12 } });
		expect(text).toContain('[removed]');
	});

	it('keep a failed query’s values out of the error (they may be positions)', () => {
		const { logger, lines } = capture();
		const error = Object.assign(
			new Error(
				'Failed query: insert into "fixes" ("lat", "lon") values ($1, $2)\nparams: 18.25,-66.75'
			),
			{ params: [18.25, -66.75] }
		);
		logger.error({ err: error }, 'failed');
		const text = JSON.stringify(lines[0]);
		expect(text).toContain('Failed query: insert into');
		expect(text).not.toContain('18.25');
		expect(text).not.toContain('66.75');
	});
});

describe('logRequests', () => {
	function event(path: string, route: string | null, requestId?: string) {
		return {
			request: new Request(`http://localhost${path}`, {
				headers: requestId ? { 'x-request-id': requestId } : {}
			}),
			route: { id: route },
			locals: {} as { requestId?: string }
		};
	}

	it('gives every line of a request its id and ends with a line naming the route, not the address', async () => {
		const { logger, lines } = capture();
		setLogger(logger);
		const e = event('/preferences/secret-token-123', '/preferences/[token]', 'edge-42');
		const response = await logRequests({
			event: e,
			resolve: async () => {
				logger.warn('inside the page');
				return new Response('ok', { status: 201 });
			}
		} as never);
		expect(response.status).toBe(201);
		expect(e.locals.requestId).toBe('edge-42');
		expect(lines.map((l) => [l.msg, l.requestId])).toEqual([
			['inside the page', 'edge-42'],
			['request', 'edge-42']
		]);
		expect(lines[1]).toMatchObject({ method: 'GET', route: '/preferences/[token]', status: 201 });
		expect(JSON.stringify(lines)).not.toContain('secret-token-123');
	});

	it('makes its own id when the offered one could forge or break a line', async () => {
		const { logger, lines } = capture();
		setLogger(logger);
		for (const offered of ['a b', '<script>', 'x'.repeat(65), undefined]) {
			const e = event('/', '/', offered);
			await logRequests({ event: e, resolve: async () => new Response('ok') } as never);
			expect(e.locals.requestId).toMatch(/^[0-9a-f-]{36}$/);
		}
		expect(new Set(lines.map((l) => l.requestId)).size).toBe(4);
	});
});
