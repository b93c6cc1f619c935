/**
 * A ~50 MiB CSV, generated while it is read (never on disk nor whole in memory), goes through the
 * reader; the retained heap is sampled after forced garbage collections and must stay far below
 * the file size. No timing is asserted.
 */
import { Readable } from 'node:stream';
import { setFlagsFromString } from 'node:v8';
import { runInNewContext } from 'node:vm';
import { expect, it } from 'vitest';
import { parsePositions } from './index';
import { NOW } from './test-support';

const TARGET_BYTES = 50 * 1024 * 1024;
const MB = 1024 * 1024;

it('parses a 50 MiB CSV as a stream with bounded memory', { timeout: 120_000 }, async () => {
	setFlagsFromString('--expose-gc');
	const gc = runInNewContext('gc') as (() => void) | undefined;
	expect(typeof gc).toBe('function');
	const collect = gc as () => void;

	const generated = { bytes: 0, rows: 0, bad: 0 };
	const t0 = Date.UTC(2020, 0, 1);
	function* csv() {
		const header = 'timestamp,lat,lon,lc,semi_major,semi_minor,orientation\n';
		generated.bytes += header.length;
		yield Buffer.from(header);
		while (generated.bytes < TARGET_BYTES) {
			let block = '';
			for (let i = 0; i < 1000; i++) {
				const n = generated.rows++;
				const time = new Date(t0 + n * 60_000).toISOString();
				// every 997th row has a latitude out of range
				const lat = n % 997 === 0 ? '95.00000' : ((n % 1700) / 10 - 85).toFixed(5);
				if (n % 997 === 0) generated.bad++;
				const lon = ((n % 3500) / 10 - 175).toFixed(5);
				block += `${time},${lat},${lon},${'G3210ABZ'[n % 8]},${700 + (n % 5000)},${n % 700},${n % 181}\n`;
			}
			generated.bytes += block.length;
			yield Buffer.from(block);
		}
	}

	collect();
	const baseline = process.memoryUsage().heapUsed;
	let peakGrowth = 0;
	let ok = 0;
	let failed = 0;
	let lastRow = 0;
	let lastTime = 0;
	for await (const item of parsePositions(Readable.from(csv(), { objectMode: false }), {
		format: 'csv',
		mapping: {
			time: 'timestamp',
			lat: 'lat',
			lon: 'lon',
			lc: 'lc',
			semiMajorM: 'semi_major',
			semiMinorM: 'semi_minor',
			orientationDeg: 'orientation'
		},
		now: NOW
	})) {
		if (item.ok) {
			ok++;
			lastRow = item.position.row;
			lastTime = item.position.time;
		} else {
			failed++;
			expect(item.problems).toEqual([
				{ row: item.row, column: 'lat', message: 'Latitude 95 is outside -90 to 90.' }
			]);
		}
		if ((ok + failed) % 50_000 === 0) {
			collect();
			peakGrowth = Math.max(peakGrowth, process.memoryUsage().heapUsed - baseline);
		}
	}

	expect(generated.bytes).toBeGreaterThanOrEqual(TARGET_BYTES);
	expect(ok + failed).toBe(generated.rows);
	expect(failed).toBe(generated.bad);
	// the header is line 1, so the last data row is line rows + 1
	expect(lastRow).toBe(generated.rows + 1);
	expect(lastTime).toBe(t0 + (generated.rows - 1) * 60_000);
	expect(peakGrowth).toBeLessThan(25 * MB);
});
