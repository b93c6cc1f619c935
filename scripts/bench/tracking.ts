// Benchmark of the tracking computation (clean + public projection) against a bare loop that only
// sums geodesic distances over the same fixes. Run with `npm run bench:tracking`; figures go into
// BENCHMARKS.md. Import (parsing and storing uploads) is not built yet and is not measured here.
import { cleanTrack } from '../../src/lib/server/tracking/clean';
import { geodesicDistance } from '../../src/lib/server/tracking/geodesy';
import { publicProjection } from '../../src/lib/server/tracking/projection';
import { syntheticTrack } from '../../src/lib/server/tracking/synthetic';
import type { Fix } from '../../src/lib/server/tracking/types';

const DAY = 86_400_000;
const T0 = Date.UTC(2025, 0, 1);

function tracks(count: number, fixesEach: number, seed: number): Fix[][] {
	const fixesPerDay = 8;
	return Array.from(
		{ length: count },
		(_, i) =>
			syntheticTrack({
				seed: seed + i,
				start: { lat: 17.5 - (i % 10) * 0.3, lon: -66.5 - Math.floor(i / 10) * 0.3 },
				startTime: T0,
				days: fixesEach / fixesPerDay,
				fixesPerDay,
				headingDeg: (i * 37) % 360,
				speedKmh: 1.5,
				spikeFraction: 0.01,
				zFraction: 0.01,
				idPrefix: `t${i}`
			}).fixes
	);
}

function timed<T>(work: () => T): { ms: number; result: T } {
	const started = performance.now();
	const result = work();
	return { ms: performance.now() - started, result };
}

function pipeline(all: Fix[][]): number {
	let points = 0;
	for (const fixes of all) {
		const { kept } = cleanTrack(fixes);
		const journey = publicProjection(kept, { now: T0 + 2000 * DAY, delayDays: 7, cellDeg: 0.1 });
		points += journey.points.length;
	}
	return points;
}

function bareLoop(all: Fix[][]): number {
	let metres = 0;
	for (const fixes of all) {
		for (let i = 1; i < fixes.length; i++) metres += geodesicDistance(fixes[i - 1], fixes[i]);
	}
	return metres;
}

const fmt = (n: number) => Math.round(n).toLocaleString('en-US');

// Warm the JIT on a small set so both sides are measured compiled.
pipeline(tracks(4, 2000, 99));
bareLoop(tracks(4, 2000, 99));

const big = tracks(100, 10_000, 1);
const total = big.reduce((n, t) => n + t.length, 0);
const full = timed(() => pipeline(big));
const bare = timed(() => bareLoop(big));

const small = tracks(1, 10_000, 500);
const large = tracks(1, 100_000, 500);
const smallRun = timed(() => pipeline(small));
const largeRun = timed(() => pipeline(large));
const nlogn = (100_000 * Math.log(100_000)) / (10_000 * Math.log(10_000));

const lines = [
	`| measure | value |`,
	`| --- | --- |`,
	`| fixes (100 transmitters × 10 000) | ${fmt(total)} |`,
	`| clean + project | ${fmt(full.ms)} ms, ${fmt((total / full.ms) * 1000)} fixes/s |`,
	`| bare geodesic loop | ${fmt(bare.ms)} ms, ${fmt((total / bare.ms) * 1000)} fixes/s |`,
	`| ratio clean + project / bare loop | ${(full.ms / bare.ms).toFixed(2)} (goal ≤ 3) |`,
	`| one transmitter, 10 000 fixes | ${fmt(smallRun.ms)} ms |`,
	`| one transmitter, 100 000 fixes | ${fmt(largeRun.ms)} ms |`,
	`| growth for 10× fixes | ${(largeRun.ms / smallRun.ms).toFixed(1)}× (n log n would be ${nlogn.toFixed(1)}×) |`,
	`| peak resident memory | ${fmt(process.resourceUsage().maxRSS / 1024)} MiB |`
];
console.log(lines.join('\n'));
