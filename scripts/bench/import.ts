// Benchmark of storing uploads: CSV files streamed through the import readers into the embedded
// database (PGlite, on disk in a temporary folder) in one transaction each, followed by the
// recompute (clean, land mask, projection, verdicts written back). Run with
// `npm run bench:import`; figures go into BENCHMARKS.md.
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Readable } from 'node:stream';
import { closeDatabase, openDatabase } from '../../src/lib/server/db';
import { patients, releases } from '../../src/lib/server/db/schema';
import { importPositions } from '../../src/lib/server/journeys/import';
import { parsePositions } from '../../src/lib/server/tracking/import';
import { loadLandMask } from '../../src/lib/server/tracking/landmask';
import { syntheticTrack } from '../../src/lib/server/tracking/synthetic';

const DAY = 86_400_000;
const NOW = Date.UTC(2026, 0, 1);
const fmt = (n: number) => Math.round(n).toLocaleString('en-US');

/** A CSV of one transmitter's synthetic track in open water south-west of the demo coast. */
function csvFor(seed: number, fixes: number): string {
	const fixesPerDay = 8;
	const { fixes: track } = syntheticTrack({
		seed,
		start: { lat: 15 + (seed % 5) * 0.5, lon: -70 - (seed % 7) * 0.5 },
		startTime: NOW - (fixes / fixesPerDay + 10) * DAY,
		days: fixes / fixesPerDay,
		fixesPerDay,
		headingDeg: 200 + (seed % 40),
		speedKmh: 0.3,
		spikeFraction: 0.01,
		zFraction: 0.01
	});
	const lines = ['timestamp,latitude,longitude,lc'];
	for (const f of track) {
		lines.push(`${new Date(f.time).toISOString()},${f.lat.toFixed(5)},${f.lon.toFixed(5)},${f.lc}`);
	}
	return lines.join('\n') + '\n';
}

const dir = mkdtempSync(join(tmpdir(), 'tideward-bench-'));
const db = await openDatabase({ dataDir: dir, migrationsFolder: 'drizzle' });
await loadLandMask(); // once per process, not part of an import

async function patientWithRelease(i: number): Promise<string> {
	const id = `bench-${i}`;
	await db.insert(patients).values({
		id,
		slug: id,
		name: `Bench ${i}`,
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2024-01-01',
		admissionReason: 'other',
		status: 'released'
	});
	await db.insert(releases).values({
		id: `release-${i}`,
		patientId: id,
		releaseOn: '2024-06-01',
		publicArea: 'offshore',
		habitat: 'other',
		doneAt: new Date('2024-06-01T00:00:00Z')
	});
	return id;
}

async function timedImport(patientId: string, csv: string) {
	const started = performance.now();
	const report = await importPositions(
		parsePositions(Readable.from([csv]), {
			format: 'csv',
			mapping: { time: 'timestamp', lat: 'latitude', lon: 'longitude', lc: 'lc' },
			now: NOW
		}),
		{
			patientId,
			transmitterId: `TX-${patientId}`,
			fileName: 'bench.csv',
			format: 'csv',
			policy: 'refuse_file',
			userId: null,
			now: NOW
		},
		db
	);
	if (!report.stored) throw new Error(`import refused: ${JSON.stringify(report.problems[0])}`);
	return { ms: performance.now() - started, report };
}

const TRANSMITTERS = 10;
const EACH = 10_000;
const files = Array.from({ length: TRANSMITTERS }, (_, i) => csvFor(i + 1, EACH));
const ids: string[] = [];
for (let i = 0; i < TRANSMITTERS; i++) ids.push(await patientWithRelease(i));

let firstMs = 0;
let fixes = 0;
for (let i = 0; i < TRANSMITTERS; i++) {
	const { ms, report } = await timedImport(ids[i], files[i]);
	firstMs += ms;
	fixes += report.rowsAdded;
}
let againMs = 0;
for (let i = 0; i < TRANSMITTERS; i++) {
	const { ms, report } = await timedImport(ids[i], files[i]);
	if (report.rowsAdded !== 0) throw new Error('a repeated upload added rows');
	againMs += ms;
}
const bigId = await patientWithRelease(99);
const big = await timedImport(bigId, csvFor(99, 10 * EACH));
const smallOne = firstMs / TRANSMITTERS;

const lines = [
	`| measure | value |`,
	`| --- | --- |`,
	`| first upload, ${TRANSMITTERS} transmitters × ${fmt(EACH)} fixes | ${fmt(firstMs)} ms, ${fmt((fixes / firstMs) * 1000)} fixes/s |`,
	`| the same files again (nothing added) | ${fmt(againMs)} ms, ${fmt((fixes / againMs) * 1000)} fixes/s |`,
	`| one transmitter, ${fmt(10 * EACH)} fixes in one file | ${fmt(big.ms)} ms, ${fmt((big.report.rowsAdded / big.ms) * 1000)} fixes/s |`,
	`| growth for 10× fixes | ${(big.ms / smallOne).toFixed(1)}× |`,
	`| peak resident memory | ${fmt(process.resourceUsage().maxRSS / 1024)} MiB |`
];
console.log(lines.join('\n'));
await closeDatabase();
rmSync(dir, { recursive: true, force: true });
