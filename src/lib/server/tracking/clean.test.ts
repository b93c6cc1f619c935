import { describe, expect, it } from 'vitest';
import { classRank } from './classes';
import { cleanTrack, speedRms } from './clean';
import { geodesicDistance, trackLength } from './geodesy';
import { mulberry32, syntheticTrack } from './synthetic';
import type { Fix, LocationClass, RejectReason } from './types';

const T0 = Date.UTC(2024, 4, 1, 0, 0, 0);
const HOUR = 3_600_000;
const DAY = 24 * HOUR;

/** A fix on the Greenwich meridian, `units` hundredths of a degree north of the equator. */
function onMeridian(id: string, hours: number, units: number, lc: LocationClass = '2'): Fix {
	return { id, time: T0 + hours * HOUR, lat: units / 100, lon: 0, lc };
}

function ids(fixes: readonly Fix[]): string[] {
	return fixes.map((f) => f.id);
}

/**
 * The rule as published (McConnell, Chambers & Fedak 1992; the "remove the single highest,
 * recompute everything" reading), done the slow obvious way: O(n²), used to check the fast one.
 */
function referenceSpeedFilter(track: Fix[], vmax: number): { kept: Fix[]; removed: Fix[] } {
	const kept = [...track];
	const removed: Fix[] = [];
	for (;;) {
		const rms = speedRms(kept);
		let best = -1;
		for (let i = 0; i < kept.length; i++) {
			if (rms[i] <= vmax) continue;
			if (
				best < 0 ||
				rms[i] > rms[best] ||
				(rms[i] === rms[best] && classRank(kept[i].lc) > classRank(kept[best].lc))
			) {
				best = i;
			}
		}
		if (best < 0) return { kept, removed };
		removed.push(kept[best]);
		kept.splice(best, 1);
	}
}

describe('speed filter: hand-worked example (McConnell, Chambers & Fedak 1992)', () => {
	/*
	 * Seven fixes one hour apart on the meridian, one step = 0.01° of latitude. Near the equator
	 * geodesicDistance gives 1105.743 m per step, so a step per hour is
	 *   u = 1105.743 / 3600 = 0.30715 m/s.
	 * Positions in steps: f0=0, f1=1, f2=2, f3=16 (a spike; it belongs near 3), f4=4, f5=5, f6=6.
	 * The speed to a neighbour k steps and h hours away is (k/h)·u. RMS over the neighbours:
	 *   f0: to f1 1/1, f2 2/2                    → u·√((1+1)/2)               = 0.3072
	 *   f1: to f0 1/1, f2 1/1, f3 15/2           → u·√((1+1+56.25)/3)         = 1.3534
	 *   f2: to f0 2/2, f1 1/1, f3 14/1, f4 2/2   → u·√((1+1+196+1)/4)         = 2.1664  (above 2!)
	 *   f3: to f1 15/2, f2 14/1, f4 12/1, f5 11/2 → u·√((56.25+196+144+30.25)/4) = 3.1716  (peak)
	 *   f4: to f2 2/2, f3 12/1, f5 1/1, f6 2/2   → u·√((1+144+1+1)/4)         = 1.8620
	 *   f5: to f3 11/2, f4 1/1, f6 1/1           → u·√((30.25+1+1)/3)         = 1.0071
	 *   f6: to f4 2/2, f5 1/1                    → u·√((1+1)/2)               = 0.3072
	 * With vmax = 2 m/s, f3 is the highest value above 2 and goes. Recomputed without it, every
	 * remaining fix moves one step per hour to all its neighbours: u = 0.3072 each, so f2
	 * (2.1664 before) stays. Removing everything above 2 in one pass would wrongly drop f2.
	 */
	const track = [0, 1, 2, 16, 4, 5, 6].map((units, i) => onMeridian(`f${i}`, i, units));
	const u = geodesicDistance({ lat: 0, lon: 0 }, { lat: 0.01, lon: 0 }) / 3600;

	it('the per-step speed is the one used in the working', () => {
		expect(u).toBeCloseTo(0.30715, 5);
	});

	it('computes the RMS values worked out by hand', () => {
		const expected = [0.3072, 1.3534, 2.1664, 3.1716, 1.862, 1.0071, 0.3072];
		const got = speedRms(track);
		expected.forEach((value, i) => expect(got[i]).toBeCloseTo(value, 3));
		// the meridian step grows very slightly with latitude, hence 6 decimals, not more
		expect(got[3]).toBeCloseTo(u * Math.sqrt(106.625), 6);
	});

	it('removes the spike only, with the value in the detail', () => {
		const { kept, rejected } = cleanTrack(track);
		expect(ids(kept)).toEqual(['f0', 'f1', 'f2', 'f4', 'f5', 'f6']);
		expect(rejected).toEqual([
			{ fix: track[3], reason: 'speed', detail: '3.2 m/s RMS to neighbours, above 2 m/s' }
		]);
		speedRms(kept).forEach((v) => expect(v).toBeCloseTo(u, 6));
	});

	it('keeps the spike when the maximum speed allows it', () => {
		expect(cleanTrack(track, { maxSpeedMs: 3.5 }).rejected).toEqual([]);
	});
});

describe('speed filter: neighbouring outliers go one at a time, highest first', () => {
	/*
	 * Nine fixes one hour apart, positions in steps 0, 1, 2, 3, 20, 28, 6, 7, 8: g4 and g5 are
	 * both wrong. First pass (same method as above): g3 3.2479, g4 3.3752, g5 4.3830 (highest),
	 * g6 3.5522. g5 goes first. Recomputed, g4 (20 steps at 4 h) has neighbours g2 18/2, g3 17/1,
	 * g6 14/2, g7 13/3 → u·√((81+289+49+18.78)/4) = 3.21 m/s, the highest, so g4 goes next.
	 * Then all are at u again.
	 */
	const track = [0, 1, 2, 3, 20, 28, 6, 7, 8].map((units, i) => onMeridian(`g${i}`, i, units));

	it('removes g5 then g4, and nothing else', () => {
		const { kept, rejected } = cleanTrack(track);
		expect(rejected.map((r) => [r.fix.id, r.reason])).toEqual([
			['g5', 'speed'],
			['g4', 'speed']
		]);
		expect(rejected[0].detail).toBe('4.4 m/s RMS to neighbours, above 2 m/s');
		expect(rejected[1].detail).toBe('3.2 m/s RMS to neighbours, above 2 m/s');
		expect(ids(kept)).toEqual(['g0', 'g1', 'g2', 'g3', 'g6', 'g7', 'g8']);
	});

	it('matches the slow reference implementation of the published rule', () => {
		const reference = referenceSpeedFilter(track, 2);
		const { kept, rejected } = cleanTrack(track);
		expect(ids(kept)).toEqual(ids(reference.kept));
		expect(rejected.map((r) => r.fix.id)).toEqual(ids(reference.removed));
	});
});

describe('speed filter on synthetic tracks', () => {
	it('removes the injected spikes and nothing else', () => {
		const { fixes, spikeIds } = syntheticTrack({
			seed: 7,
			start: { lat: -12.5, lon: 151.2 },
			startTime: T0,
			days: 60,
			fixesPerDay: 4,
			headingDeg: 120,
			speedKmh: 1.5,
			spikeFraction: 0.05
		});
		expect(spikeIds.length).toBeGreaterThan(5);
		const { kept, rejected } = cleanTrack(fixes);
		expect(rejected.map((r) => r.fix.id).sort()).toEqual([...spikeIds].sort());
		expect(rejected.every((r) => r.reason === 'speed')).toBe(true);
		expect(kept.length).toBe(fixes.length - spikeIds.length);
	});

	it('agrees with the slow reference on messy tracks (several seeds)', () => {
		for (let seed = 1; seed <= 8; seed++) {
			const { fixes } = syntheticTrack({
				seed,
				start: { lat: 5, lon: -30 },
				startTime: T0,
				days: 15,
				fixesPerDay: 12,
				headingDeg: 45,
				speedKmh: 2,
				noiseScale: 2,
				spikeFraction: 0.15,
				spikeKm: 40
			});
			const reference = referenceSpeedFilter(fixes, 2);
			const { kept, rejected } = cleanTrack(fixes);
			expect(ids(kept)).toEqual(ids(reference.kept));
			expect(rejected.map((r) => r.fix.id)).toEqual(ids(reference.removed));
		}
	});

	it('agrees with the slow reference on random tracks with bursts of adjacent spikes', () => {
		// syntheticTrack never puts two outliers side by side; here a burst often repeats its wrong
		// position at the next fix, and vmax varies, so removals cascade through neighbours.
		const random = mulberry32(1992);
		const classes: LocationClass[] = ['3', '2', 'A', 'B'];
		const wrapLon = (lon: number) => lon - Math.floor((lon + 180) / 360) * 360;
		let removed = 0;
		for (let round = 0; round < 150; round++) {
			const n = 5 + Math.floor(random() * 80);
			const vmax = 1 + random() * 3;
			let lat = -60 + random() * 120;
			let lon = -180 + random() * 360;
			let time = T0;
			const fixes: Fix[] = [];
			for (let i = 0; i < n; i++) {
				time += Math.floor((0.5 + random() * 6) * HOUR);
				lat = Math.max(-80, Math.min(80, lat + (random() - 0.5) * 0.04));
				lon = lon + (random() - 0.5) * 0.04;
				const burst = random() < 0.08;
				const jump = burst ? (0.5 + random() * 1.5) * (random() < 0.5 ? -1 : 1) : 0;
				fixes.push({
					id: `r${round}-${String(i).padStart(3, '0')}`,
					time,
					lat: lat + jump,
					lon: wrapLon(lon - jump),
					lc: classes[Math.floor(random() * classes.length)]
				});
				// a burst continues into the next fix half of the time: neighbouring outliers
				if (burst && random() < 0.5 && i + 1 < n) {
					time += Math.floor((0.5 + random() * 2) * HOUR);
					i++;
					fixes.push({
						...fixes[fixes.length - 1],
						id: `r${round}-${String(i).padStart(3, '0')}`,
						time
					});
				}
			}
			const reference = referenceSpeedFilter(fixes, vmax);
			const { kept, rejected } = cleanTrack(fixes, { maxSpeedMs: vmax });
			expect(rejected.every((r) => r.reason === 'speed')).toBe(true);
			expect(ids(kept)).toEqual(ids(reference.kept));
			expect(rejected.map((r) => r.fix.id)).toEqual(ids(reference.removed));
			removed += reference.removed.length;
		}
		expect(removed).toBeGreaterThan(150);
	});

	it('a fact of the trade (common practice): released turtles cover thousands of kilometres in a few months — a ~3 700 km (2 300 mi), 135-day synthetic journey passes untouched', () => {
		const { fixes } = syntheticTrack({
			seed: 2300,
			start: { lat: 24.2, lon: -79.1 },
			startTime: T0,
			days: 135,
			fixesPerDay: 4,
			headingDeg: 70,
			speedKmh: 1.16
		});
		const { kept, rejected } = cleanTrack(fixes);
		expect(rejected).toEqual([]);
		expect(kept.length).toBe(fixes.length);
		const km = trackLength(kept) / 1000;
		expect(km).toBeGreaterThan(2300 * 1.609344);
		expect(km).toBeLessThan(4500);
		expect((kept[kept.length - 1].time - kept[0].time) / DAY).toBeGreaterThan(134);
	});

	it('green-turtle migration speeds of 1.2–2.5 km/h pass (Balazs, Parker & Rice 2017, Micronesica, secondary)', () => {
		for (const speedKmh of [1.2, 1.8, 2.5]) {
			const { fixes } = syntheticTrack({
				seed: Math.round(speedKmh * 10),
				start: { lat: 20.5, lon: -160.1 },
				startTime: T0,
				days: 40,
				fixesPerDay: 6,
				headingDeg: 290,
				speedKmh,
				wanderDeg: 5
			});
			expect(cleanTrack(fixes).rejected).toEqual([]);
		}
	});
});

describe('cleanTrack: every step and reason', () => {
	const good = [0, 1, 2, 3, 4, 5].map((units, i) => onMeridian(`ok${i}`, i * 6, units));

	it('produces every reason, in the documented order, each with a readable detail', () => {
		const input: Fix[] = [
			...good,
			{ id: 'nan', time: T0 + HOUR, lat: Number.NaN, lon: 0, lc: '3' },
			{ id: 'lat', time: T0 + HOUR, lat: 91, lon: 0, lc: '3' },
			{ id: 'lon', time: T0 + HOUR, lat: 0, lon: -180.5, lc: '3' },
			{ id: 'time', time: Number.POSITIVE_INFINITY, lat: 0, lon: 0, lc: '3' },
			{ id: 'z', time: T0 + 2 * HOUR, lat: 0.001, lon: 0, lc: 'Z' },
			{ id: 'weird', time: T0 + 2 * HOUR, lat: 0.001, lon: 0, lc: 'C' as LocationClass },
			{ id: 'b', time: T0 + 3 * HOUR, lat: 0.002, lon: 0, lc: 'B' },
			{ ...good[2], id: 'twin' },
			{ ...good[3], id: 'conflict', lat: good[3].lat + 0.001, lc: 'A' },
			onMeridian('inland', 8, 1.5),
			onMeridian('spike', 27, 60)
		];
		const { kept, rejected } = cleanTrack(input, {
			minimumClass: 'A',
			landFilter: (f) => f.id === 'inland'
		});
		expect(ids(kept)).toEqual(['ok0', 'ok1', 'ok2', 'ok3', 'ok4', 'ok5']);
		const byId = Object.fromEntries(rejected.map((r) => [r.fix.id, [r.reason, r.detail]]));
		expect(byId).toEqual({
			lat: ['invalid_coordinates', 'latitude 91 is outside −90…90'],
			lon: ['invalid_coordinates', 'longitude -180.5 is outside −180…180'],
			nan: ['invalid_coordinates', 'latitude is not a number'],
			time: ['invalid_coordinates', 'time is not a valid instant'],
			z: ['invalid_class', 'class Z is invalid'],
			weird: ['invalid_class', 'class "C" is not a location class'],
			b: ['below_minimum_class', 'class B is below the minimum class A'],
			twin: ['duplicate', 'same time, position and class as fix ok2'],
			conflict: [
				'same_time_conflict',
				'same time as fix ok3 at a different position; class 2 is better than A'
			],
			inland: ['on_land', 'well inland according to the land mask'],
			spike: ['speed', expect.stringMatching(/^\d+\.\d m\/s RMS to neighbours, above 2 m\/s$/)]
		});
		const order: RejectReason[] = [
			'invalid_coordinates',
			'invalid_class',
			'below_minimum_class',
			'duplicate',
			'same_time_conflict',
			'on_land',
			'speed'
		];
		const seen = rejected.map((r) => order.indexOf(r.reason));
		expect(seen).toEqual([...seen].sort((a, b) => a - b));
		expect(rejected.length + kept.length).toBe(input.length);
	});

	it('keeps the better class when two fixes share a time, whatever comes first', () => {
		const worse = { ...good[1], id: 'worse', lat: 0.05, lc: '0' as const };
		const better = { ...good[1], id: 'better', lat: 0.011, lc: '3' as const };
		for (const input of [
			[good[0], worse, better, good[2]],
			[good[0], better, worse, good[2]]
		]) {
			const { kept, rejected } = cleanTrack(input);
			expect(ids(kept)).toEqual(['ok0', 'better', 'ok2']);
			expect(rejected.map((r) => [r.fix.id, r.reason])).toEqual([['worse', 'same_time_conflict']]);
		}
	});

	it('on an equal class keeps the first in canonical order (smallest id), whatever the input order', () => {
		const a = { ...good[1], id: 'a', lat: 0.011 };
		const b = { ...good[1], id: 'b', lat: 0.012 };
		for (const input of [
			[good[0], a, b],
			[b, good[0], a]
		]) {
			const { kept, rejected } = cleanTrack(input);
			expect(ids(kept)).toEqual(['ok0', 'a']);
			expect(rejected[0].detail).toBe(
				'same time as fix a at a different position; equal class 2, the first is kept'
			);
		}
	});

	it('keeps one of exact duplicates, and the better class of a same-place, same-time pair', () => {
		const copy = { ...good[1], id: 'copy' };
		const poorer = { ...good[1], id: 'poorer', lc: 'B' as const };
		const { kept, rejected } = cleanTrack([good[0], copy, good[1], poorer, good[2]]);
		expect(ids(kept)).toEqual(['ok0', 'copy', 'ok2']); // "copy" < "ok1": canonical first
		expect(rejected.map((r) => [r.fix.id, r.reason, r.detail])).toEqual([
			['ok1', 'duplicate', 'same time, position and class as fix copy'],
			['poorer', 'same_time_conflict', 'same time as fix copy; class 2 is better than B']
		]);
	});

	it('the default minimum class keeps A and B; a stricter one drops them', () => {
		const input = [
			onMeridian('g', 0, 0, 'G'),
			onMeridian('a', 6, 1, 'A'),
			onMeridian('b', 12, 2, 'B')
		];
		expect(ids(cleanTrack(input).kept)).toEqual(['g', 'a', 'b']);
		expect(ids(cleanTrack(input, { minimumClass: '1' }).kept)).toEqual(['g']);
	});

	it('never depends on the input order', () => {
		const { fixes } = syntheticTrack({
			seed: 99,
			start: { lat: -3, lon: 40 },
			startTime: T0,
			days: 30,
			fixesPerDay: 8,
			headingDeg: 200,
			speedKmh: 1.4,
			zFraction: 0.05,
			spikeFraction: 0.05
		});
		const messy: Fix[] = [
			...fixes,
			{ ...fixes[10], id: 'dup-a' },
			{ ...fixes[10], id: 'dup-b' },
			{ ...fixes[20], id: 'clash-1', lat: fixes[20].lat + 0.01 },
			{ ...fixes[20], id: 'clash-0', lat: fixes[20].lat - 0.01 },
			{ id: 'bad', time: Number.NaN, lat: 0, lon: 0, lc: '1' },
			{ id: 'bad', time: T0, lat: 100, lon: 0, lc: '1' }
		];
		const summary = (r: ReturnType<typeof cleanTrack>) => ({
			kept: ids(r.kept),
			rejected: r.rejected.map((x) => [x.fix.id, x.reason, x.detail])
		});
		const expected = summary(cleanTrack(messy, { landFilter: (f) => f.lat < -3.3 }));
		expect(expected.rejected.length).toBeGreaterThan(10);
		const random = mulberry32(5);
		for (let round = 0; round < 5; round++) {
			const shuffled = [...messy];
			for (let i = shuffled.length - 1; i > 0; i--) {
				const j = Math.floor(random() * (i + 1));
				[shuffled[i], shuffled[j]] = [shuffled[j], shuffled[i]];
			}
			expect(summary(cleanTrack(shuffled, { landFilter: (f) => f.lat < -3.3 }))).toEqual(expected);
		}
	});

	it('handles an empty or one-fix track, and two fixes too far apart', () => {
		expect(cleanTrack([])).toEqual({ kept: [], rejected: [], legMetres: new Float64Array(0) });
		expect(cleanTrack([good[0]])).toEqual({
			kept: [good[0]],
			rejected: [],
			legMetres: new Float64Array(0)
		});
		// Two fixes 1° apart in an hour (≈ 31 m/s): equal values, the worse class goes.
		const far = [onMeridian('x', 0, 0, '3'), onMeridian('y', 1, 100, 'A')];
		const { kept, rejected } = cleanTrack(far);
		expect(ids(kept)).toEqual(['x']);
		expect(rejected[0].fix.id).toBe('y');
	});

	it('does not change the input array or its fixes', () => {
		const input = [good[2], good[0], good[1]];
		const snapshot = JSON.stringify(input);
		cleanTrack(input);
		expect(JSON.stringify(input)).toBe(snapshot);
	});

	it('refuses a nonsensical maximum speed or minimum class', () => {
		expect(() => cleanTrack(good, { maxSpeedMs: 0 })).toThrow(RangeError);
		expect(() => cleanTrack(good, { maxSpeedMs: Number.NaN })).toThrow(RangeError);
		expect(() => cleanTrack(good, { minimumClass: 'Q' as LocationClass })).toThrow(RangeError);
	});

	// Speed is measured by the benchmark script, not asserted here (timings on shared machines
	// are noise); this checks the large case is handled correctly.
	it('cleans 10 000 fixes and removes exactly the injected spikes', () => {
		const { fixes, spikeIds } = syntheticTrack({
			seed: 10_000,
			start: { lat: 0, lon: -150 },
			startTime: T0,
			days: 1000,
			fixesPerDay: 10,
			headingDeg: 90,
			speedKmh: 1.5,
			spikeFraction: 0.03
		});
		expect(fixes.length).toBe(10_000);
		const { rejected } = cleanTrack(fixes);
		expect(rejected.map((r) => r.fix.id).sort()).toEqual([...spikeIds].sort());
	});
});
