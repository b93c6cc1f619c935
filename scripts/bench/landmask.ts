// Benchmark of the land mask (src/lib/server/tracking/landmask.ts): time and memory to build the
// index, microseconds per query for points at sea, near a coast and inland, and the cost of the
// land filter inside cleanTrack on the tracking benchmark's synthetic tracks. Run with
// `npm run bench:landmask`.
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { mesh } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { cleanTrack } from '../../src/lib/server/tracking/clean';
import { direct } from '../../src/lib/server/tracking/geodesy';
import {
	LandIndex,
	landFilterFor,
	landMaskFrom,
	type LandMask
} from '../../src/lib/server/tracking/landmask';
import { mulberry32, syntheticTrack } from '../../src/lib/server/tracking/synthetic';
import type { Fix } from '../../src/lib/server/tracking/types';

const gc = (globalThis as { gc?: () => void }).gc ?? (() => {});
const mib = (bytes: number) => (bytes / 1024 / 1024).toFixed(1);
const fmt = (n: number, digits = 0) =>
	n.toLocaleString('en-US', { minimumFractionDigits: digits, maximumFractionDigits: digits });

function timed<T>(work: () => T): { ms: number; result: T } {
	const started = performance.now();
	const result = work();
	return { ms: performance.now() - started, result };
}

gc();
const before = process.memoryUsage();
const path = createRequire(import.meta.url).resolve('world-atlas/land-10m.json');
const parse = timed(
	() => JSON.parse(readFileSync(path, 'utf8')) as Topology<{ land: GeometryCollection }>
);
const build = timed(() => new LandIndex(parse.result));
const index = build.result;
const peakRss = process.resourceUsage().maxRSS * 1024;
gc();
const after = process.memoryUsage();

const mask = landMaskFrom(index);
const random = mulberry32(20261202);

// Points near the coast: coastline vertices moved up to 3 km in a random direction.
const coastVertices = mesh(parse.result, parse.result.objects.land).coordinates.flat();
const coastal: [number, number][] = [];
while (coastal.length < 20_000) {
	const [lon, lat] = coastVertices[Math.floor(random() * coastVertices.length)];
	const p = direct({ lat, lon }, random() * 360, random() * 3000);
	coastal.push([p.lat, p.lon]);
}
// Uniform on the sphere, then split by what the mask says.
const sea: [number, number][] = [];
const inland: [number, number][] = [];
while (sea.length < 20_000 || inland.length < 20_000) {
	const lat = (Math.asin(2 * random() - 1) * 180) / Math.PI;
	const lon = random() * 360 - 180;
	if (!mask.isLand(lat, lon)) {
		if (sea.length < 20_000) sea.push([lat, lon]);
	} else if (inland.length < 20_000 && mask.inlandDistance(lat, lon) > 20_000) {
		inland.push([lat, lon]);
	}
}

function perQuery(points: [number, number][], query: (lat: number, lon: number) => unknown) {
	for (const [lat, lon] of points) query(lat, lon); // warm up
	const rounds = 5;
	const { ms } = timed(() => {
		for (let r = 0; r < rounds; r++) for (const [lat, lon] of points) query(lat, lon);
	});
	return (ms * 1000) / (rounds * points.length);
}

const queries: [string, [number, number][]][] = [
	['open sea (uniform, at sea)', sea],
	['within 3 km of a coast', coastal],
	['inland (uniform, > 20 km)', inland]
];
const rows: string[] = [];
for (const [name, points] of queries) {
	const well = perQuery(points, (lat, lon) => mask.isWellInland(lat, lon));
	const distance = perQuery(points, (lat, lon) => mask.inlandDistance(lat, lon));
	rows.push(`| ${name} | ${well.toFixed(2)} µs | ${distance.toFixed(1)} µs |`);
}

// The tracking benchmark's tracks (scripts/bench/tracking.ts): 100 × 10 000 fixes near 17°N 66°W.
const T0 = Date.UTC(2025, 0, 1);
const tracks: Fix[][] = Array.from(
	{ length: 100 },
	(_, i) =>
		syntheticTrack({
			seed: 1 + i,
			start: { lat: 17.5 - (i % 10) * 0.3, lon: -66.5 - Math.floor(i / 10) * 0.3 },
			startTime: T0,
			days: 10_000 / 8,
			fixesPerDay: 8,
			headingDeg: (i * 37) % 360,
			speedKmh: 1.5,
			spikeFraction: 0.01,
			zFraction: 0.01,
			idPrefix: `t${i}`
		}).fixes
);
const total = tracks.reduce((n, t) => n + t.length, 0);
const filter = landFilterFor(mask);
const filterOnly = timed(() => {
	let n = 0;
	for (const t of tracks) for (const f of t) if (filter(f)) n++;
	return n;
});
const cleanWith = (landFilter?: (fix: Fix) => boolean) =>
	timed(() => tracks.reduce((n, t) => n + cleanTrack(t, { landFilter }).kept.length, 0));
cleanWith(filter); // warm up
const plain = cleanWith();
const withMask = cleanWith(filter);
const masks: LandMask[] = [];
const manyThresholds = timed(() => {
	for (const inlandMetres of [1000, 2000, 5000, 10_000, 20_000])
		masks.push(landMaskFrom(index, { inlandMetres }));
});

console.log(`node ${process.version}, ${new Date().toISOString()}`);
console.log(
	[
		`| measure | value |`,
		`| --- | --- |`,
		`| read + JSON.parse land-10m.json (3.1 MB) | ${fmt(parse.ms)} ms |`,
		`| build index (topojson feature, rings, grid ${index.cellDegrees}°) | ${fmt(build.ms)} ms |`,
		`| rings / edges / coast edges / coast cells | ${fmt(index.stats.rings)} / ${fmt(index.stats.edges)} / ${fmt(index.stats.coastEdges)} / ${fmt(index.stats.coastCells)} of ${fmt(index.rows * index.cols)} |`,
		`| index arrays | ${mib(index.bytes)} MiB |`,
		`| heap + array buffers, before → after build (after GC, topology still held) | ${mib(before.heapUsed + before.arrayBuffers)} → ${mib(after.heapUsed + after.arrayBuffers)} MiB |`,
		`| peak resident memory so far | ${mib(peakRss)} MiB |`,
		`| five more LandMasks over the same index | ${manyThresholds.ms.toFixed(2)} ms |`
	].join('\n')
);
console.log(
	[
		'',
		`| points (20 000 each) | isWellInland | inlandDistance |`,
		`| --- | --- | --- |`,
		...rows
	].join('\n')
);
console.log(
	[
		'',
		`| tracking benchmark tracks (${fmt(total)} fixes) | value |`,
		`| --- | --- |`,
		`| land filter alone | ${fmt(filterOnly.ms)} ms, ${((filterOnly.ms * 1000) / total).toFixed(2)} µs/fix, ${fmt(filterOnly.result)} fixes well inland |`,
		`| cleanTrack without land filter | ${fmt(plain.ms)} ms (${fmt(plain.result)} kept) |`,
		`| cleanTrack with land filter | ${fmt(withMask.ms)} ms (${fmt(withMask.result)} kept) |`
	].join('\n')
);
