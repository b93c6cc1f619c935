/**
 * An upload can be cut off before the parser takes its first step (the import opens its database
 * transaction first; on a PostgreSQL server that is a network round trip). The error must wait
 * for the parser and come out of it, not end the process as an 'error' event nobody listens to.
 */
import { Readable } from 'node:stream';
import type { ReadableStream as NodeReadableStream } from 'node:stream/web';
import { setImmediate } from 'node:timers/promises';
import { describe, expect, it } from 'vitest';
import { parsePositions } from './index';
import { collect, NOW } from './test-support';

describe('parsePositions, source failing before the first step', () => {
	for (const format of ['csv', 'geojson', 'gpx'] as const) {
		it(`throws the source's own error (${format})`, async () => {
			// As the tracking import route reads a request body: a web stream turned into a Node one.
			const cutOff = new Error('the client closed the connection');
			const body = new ReadableStream<Uint8Array>({
				start(controller) {
					controller.enqueue(new TextEncoder().encode('time,lat,lon,lc\n'));
					controller.error(cutOff);
				}
			});
			const source = Readable.fromWeb(body as NodeReadableStream<Uint8Array>);
			const items = parsePositions(source, {
				format,
				mapping: { time: 'time', lat: 'lat', lon: 'lon', lc: 'lc' },
				now: NOW
			});
			await setImmediate();
			expect(source.errored).toBe(cutOff);

			await expect(collect(items)).rejects.toBe(cutOff);
		});
	}
});
