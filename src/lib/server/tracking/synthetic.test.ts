import { describe, expect, it } from 'vitest';
import { geodesicDistance } from './geodesy';
import { mulberry32, syntheticTrack } from './synthetic';

const base = {
	seed: 42,
	start: { lat: 10, lon: -40 },
	startTime: Date.UTC(2024, 0, 1),
	days: 30,
	fixesPerDay: 4,
	headingDeg: 90,
	speedKmh: 1.5
};

describe('mulberry32', () => {
	it('is deterministic per seed and stays in [0, 1)', () => {
		const a = mulberry32(1);
		const b = mulberry32(1);
		const c = mulberry32(2);
		const xs = Array.from({ length: 1000 }, () => a());
		expect(Array.from({ length: 1000 }, () => b())).toEqual(xs);
		expect(c()).not.toBe(xs[0]);
		expect(Math.min(...xs)).toBeGreaterThanOrEqual(0);
		expect(Math.max(...xs)).toBeLessThan(1);
		const mean = xs.reduce((s, x) => s + x, 0) / xs.length;
		expect(Math.abs(mean - 0.5)).toBeLessThan(0.05);
	});
});

describe('syntheticTrack', () => {
	it('is deterministic and starts exactly at the start', () => {
		const one = syntheticTrack(base);
		expect(syntheticTrack(base)).toEqual(one);
		expect(syntheticTrack({ ...base, seed: 43 }).fixes).not.toEqual(one.fixes);
		expect(one.fixes).toHaveLength(120);
		expect(one.fixes[0]).toMatchObject({ time: base.startTime, lat: 10, lon: -40 });
	});

	it('has strictly increasing times and moves along the heading at about the speed', () => {
		const { fixes, truePathLengthM } = syntheticTrack({ ...base, noiseScale: 0, wanderDeg: 0 });
		for (let i = 1; i < fixes.length; i++) expect(fixes[i].time).toBeGreaterThan(fixes[i - 1].time);
		const hours = (fixes[fixes.length - 1].time - fixes[0].time) / 3_600_000;
		expect(truePathLengthM / 1000 / hours).toBeGreaterThan(1.3);
		expect(truePathLengthM / 1000 / hours).toBeLessThan(1.7);
		// due east from 10°N: latitude barely changes, longitude grows
		const last = fixes[fixes.length - 1];
		expect(last.lon).toBeGreaterThan(-40);
		expect(Math.abs(last.lat - 10)).toBeLessThan(0.5);
	});

	it('injects isolated Z fixes and spikes only when asked', () => {
		expect(syntheticTrack(base).spikeIds).toEqual([]);
		const { fixes, spikeIds, zIds } = syntheticTrack({
			...base,
			days: 100,
			zFraction: 0.1,
			spikeFraction: 0.1,
			spikeKm: 80
		});
		expect(spikeIds.length).toBeGreaterThan(10);
		expect(zIds.length).toBeGreaterThan(10);
		const byId = new Map(fixes.map((f, i) => [f.id, i]));
		for (const id of zIds) expect(fixes[byId.get(id) as number].lc).toBe('Z');
		const injected = new Set([...spikeIds, ...zIds].map((id) => byId.get(id) as number));
		expect(injected.has(0)).toBe(false);
		for (const i of injected) expect(injected.has(i + 1)).toBe(false);
		for (const id of spikeIds) {
			const i = byId.get(id) as number;
			const gap = geodesicDistance(fixes[i], fixes[i - 1]);
			expect(gap).toBeGreaterThan(50_000);
		}
	});

	it('draws classes from the mix given', () => {
		const { fixes } = syntheticTrack({ ...base, classMix: { G: 1, B: 1 } });
		expect(new Set(fixes.map((f) => f.lc))).toEqual(new Set(['G', 'B']));
		expect(() => syntheticTrack({ ...base, classMix: { Z: 1 } })).toThrow(RangeError);
	});
});
