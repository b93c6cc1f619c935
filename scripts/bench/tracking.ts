// Benchmark of the tracking computation: import (the streaming CSV reader) + clean (with the land
// mask) + public projection, against a bare loop that only sums geodesic distances over the same
// fixes. Run with `npm run bench:tracking`; figures go into BENCHMARKS.md. Storing positions in
// the database is not part of this bench; it is measured separately.
import { Readable } from 'node:stream';
import { cleanTrack } from '../../src/lib/server/tracking/clean';
import { geodesicDistance } from '../../src/lib/server/tracking/geodesy';
import { parsePositions, type CsvMapping } from '../../src/lib/server/tracking/import';
import { landFilterFor, loadLandMask } from '../../src/lib/server/tracking/landmask';
import { publicProjection } from '../../src/lib/server/tracking/projection';
import { syntheticTrack } from '../../src/lib/server/tracking/synthetic';
import type { Fix } from '../../src/lib/server/tracking/types';

const DAY = 86_400_000;
const T0 = Date.UTC(2025, 0, 1);
const FIXES_PER_DAY = 8;
// Later than every synthetic fix (100 000 fixes span ~34 years), so the parser accepts them all
// and the projection's cutoff withholds only the last week.
const NOW = T0 + 20_000 * DAY;
const MAPPING: CsvMapping = { time: 'timestamp', lat: 'lat', lon: 'lon', lc: 'lc' };
/** Uploads arrive in chunks; 64 KiB is Node's default for file streams. */
const CHUNK_BYTES = 64 * 1024;

function tracks(count: number, fixesEach: number, seed: number): Fix[][] {
	return Array.from(
		{ length: count },
		(_, i) =>
			syntheticTrack({
				seed: seed + i,
				start: { lat: 17.5 - (i % 10) * 0.3, lon: -66.5 - Math.floor(i / 10) * 0.3 },
				startTime: T0,
				days: fixesEach / FIXES_PER_DAY,
				fixesPerDay: FIXES_PER_DAY,
				headingDeg: (i * 37) % 360,
				speedKmh: 1.5,
				spikeFraction: 0.01,
				zFraction: 0.01,
				idPrefix: `t${i}`
			}).fixes
	);
}

/** The CSV a transmitter's export would hold, as chunks of bytes (numbers round-trip exactly). */
function csvChunks(fixes: readonly Fix[]): Buffer[] {
	const lines = ['timestamp,lat,lon,lc'];
	for (const f of fixes) lines.push(`${new Date(f.time).toISOString()},${f.lat},${f.lon},${f.lc}`);
	const bytes = Buffer.from(lines.join('\n') + '\n', 'utf8');
	const chunks: Buffer[] = [];
	for (let at = 0; at < bytes.length; at += CHUNK_BYTES) {
		chunks.push(bytes.subarray(at, at + CHUNK_BYTES));
	}
	return chunks;
}

async function importCsv(chunks: readonly Buffer[]): Promise<Fix[]> {
	const fixes: Fix[] = [];
	const source = Readable.from(chunks, { objectMode: false });
	for await (const item of parsePositions(source, { format: 'csv', mapping: MAPPING, now: NOW })) {
		if (!item.ok) throw new Error(`row ${item.row}: ${item.problems[0]?.message}`);
		const p = item.position;
		// The database would give the id; the row number stands in for it.
		fixes.push({ id: String(p.row), time: p.time, lat: p.lat, lon: p.lon, lc: p.lc });
	}
	return fixes;
}

interface Parts {
	parse: number;
	clean: number;
	project: number;
	kept: number;
	onLand: number;
	points: number;
	/** sum of the public distances: the same before and after a speed-up, or results changed */
	metres: number;
}

async function pipeline(
	csvs: readonly Buffer[][],
	landFilter: (fix: Fix) => boolean
): Promise<Parts> {
	const parts: Parts = {
		parse: 0,
		clean: 0,
		project: 0,
		kept: 0,
		onLand: 0,
		points: 0,
		metres: 0
	};
	for (const chunks of csvs) {
		const t0 = performance.now();
		const fixes = await importCsv(chunks);
		const t1 = performance.now();
		const { kept, rejected, legMetres } = cleanTrack(fixes, { landFilter });
		const t2 = performance.now();
		const journey = publicProjection(kept, { now: NOW, delayDays: 7, cellDeg: 0.1, legMetres });
		const t3 = performance.now();
		parts.parse += t1 - t0;
		parts.clean += t2 - t1;
		parts.project += t3 - t2;
		parts.kept += kept.length;
		parts.onLand += rejected.filter((r) => r.reason === 'on_land').length;
		parts.points += journey.points.length;
		parts.metres += journey.distanceMetres;
	}
	return parts;
}

const total = (p: Parts) => p.parse + p.clean + p.project;

function bareLoop(all: Fix[][]): number {
	let metres = 0;
	for (const fixes of all) {
		for (let i = 1; i < fixes.length; i++) metres += geodesicDistance(fixes[i - 1], fixes[i]);
	}
	return metres;
}

/** `node --expose-gc` (as scripts/bench-tracking.js runs it): start each measure on a clean heap. */
const gc = (globalThis as { gc?: () => void }).gc ?? (() => {});

function timed<T>(work: () => T): { ms: number; result: T } {
	gc();
	const started = performance.now();
	const result = work();
	return { ms: performance.now() - started, result };
}

const median = (values: number[]) => [...values].sort((a, b) => a - b)[values.length >> 1];

/** Runs of one small track are noisy on a shared machine: the median of five. */
async function medianOf5(csvs: Buffer[][], landFilter: (fix: Fix) => boolean): Promise<number> {
	const runs: number[] = [];
	for (let r = 0; r < 5; r++) {
		gc();
		runs.push(total(await pipeline(csvs, landFilter)));
	}
	return median(runs);
}

const fmt = (n: number) => Math.round(n).toLocaleString('en-US');
const rate = (count: number, ms: number) => `${fmt(ms)} ms, ${fmt((count / ms) * 1000)} fixes/s`;
const mib = (bytes: number) => `${fmt(bytes / 1024 / 1024)} MiB`;

const rssBeforeMask = process.memoryUsage().rss;
const maskLoad = performance.now();
const landFilter = landFilterFor(await loadLandMask());
const maskMs = performance.now() - maskLoad;
const maskRss = process.memoryUsage().rss - rssBeforeMask;

// The CSV must read back as exactly the synthetic fixes, or the bench would measure other work.
const warm = tracks(4, 2000, 99);
const warmCsv = warm.map(csvChunks);
const readBack = await importCsv(warmCsv[0]);
if (
	readBack.length !== warm[0].length ||
	readBack.some((f, i) => {
		const g = warm[0][i];
		return f.time !== g.time || f.lat !== g.lat || f.lon !== g.lon || f.lc !== g.lc;
	})
) {
	throw new Error('the CSV does not read back as the synthetic fixes');
}
// Warm the JIT so every part is measured compiled.
await pipeline(warmCsv, landFilter);
bareLoop(warm);

const big = tracks(100, 10_000, 1);
const bigCsv = big.map(csvChunks);
const fixCount = big.reduce((n, t) => n + t.length, 0);
const csvBytes = bigCsv.flat().reduce((n, c) => n + c.length, 0);
const rssBeforeRun = process.memoryUsage().rss;

// Each measure is the median of three runs, taken in turns so that a busy moment on the shared
// machine hits one run of each rather than all runs of one; each starts after a full collection,
// so no measure pays for the garbage of the one before.
const fullRuns: Parts[] = [];
const bareRuns: number[] = [];
const cleanProjectRuns: number[] = [];
for (let round = 0; round < 3; round++) {
	gc();
	fullRuns.push(await pipeline(bigCsv, landFilter));
	bareRuns.push(timed(() => bareLoop(big)).ms);
	// The measure of the earlier tables: no import, no land mask, on the synthetic fixes.
	cleanProjectRuns.push(
		timed(() => {
			let points = 0;
			for (const fixes of big) {
				const { kept, legMetres } = cleanTrack(fixes);
				const options = { now: NOW, delayDays: 7, cellDeg: 0.1 as const, legMetres };
				points += publicProjection(kept, options).points.length;
			}
			return points;
		}).ms
	);
}
const full = [...fullRuns].sort((a, b) => total(a) - total(b))[1];
const fullMs = total(full);
const bare = { ms: median(bareRuns) };
const cleanProject = { ms: median(cleanProjectRuns) };
const landAlone = timed(() => big.reduce((n, t) => n + t.filter(landFilter).length, 0));

const small = [csvChunks(tracks(1, 10_000, 500)[0])];
const large = [csvChunks(tracks(1, 100_000, 500)[0])];
const smallMs = await medianOf5(small, landFilter);
const largeMs = await medianOf5(large, landFilter);
const nlogn = (100_000 * Math.log(100_000)) / (10_000 * Math.log(10_000));

const share = (ms: number) => `${((ms / fullMs) * 100).toFixed(0)} %`;
const lines = [
	`| measure | value |`,
	`| --- | --- |`,
	`| fixes (100 transmitters × 10 000), as CSV; runs | ${fmt(fixCount)} rows, ${mib(csvBytes)}; median of 3 |`,
	`| land mask load (before timing) | ${fmt(maskMs)} ms, +${mib(maskRss)} resident |`,
	`| import (CSV parse) | ${rate(fixCount, full.parse)} (${share(full.parse)}) |`,
	`| clean (with land mask) | ${rate(fixCount, full.clean)} (${share(full.clean)}) |`,
	`| project | ${rate(fixCount, full.project)} (${share(full.project)}) |`,
	`| import + clean + project | ${rate(fixCount, fullMs)} |`,
	`| bare geodesic loop | ${rate(fixCount, bare.ms)} |`,
	`| ratio import + clean + project / bare loop | ${(fullMs / bare.ms).toFixed(2)} (goal ≤ 3) |`,
	`| ratio clean + project / bare loop | ${((full.clean + full.project) / bare.ms).toFixed(2)} |`,
	`| land filter alone, same fixes (inside clean) | ${fmt(landAlone.ms)} ms |`,
	`| clean + project without import or land mask | ${rate(fixCount, cleanProject.ms)}, ratio ${(cleanProject.ms / bare.ms).toFixed(2)} |`,
	`| kept; rejected on land; public points; public km | ${fmt(full.kept)}; ${fmt(full.onLand)}; ${fmt(full.points)}; ${(full.metres / 1000).toLocaleString('en-US', { minimumFractionDigits: 3, maximumFractionDigits: 3 })} |`,
	`| one transmitter, 10 000 fixes (median of 5) | ${fmt(smallMs)} ms |`,
	`| one transmitter, 100 000 fixes (median of 5) | ${fmt(largeMs)} ms |`,
	`| growth for 10× fixes | ${(largeMs / smallMs).toFixed(1)}× (n log n would be ${nlogn.toFixed(1)}×) |`,
	`| resident memory before the run (inputs + mask) | ${mib(rssBeforeRun)} |`,
	`| peak resident memory | ${mib(process.resourceUsage().maxRSS * 1024)} |`
];
console.log(lines.join('\n'));
