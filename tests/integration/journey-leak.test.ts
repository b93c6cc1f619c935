// THE JOURNEY LEAK TEST. Loads the demo scenario (a released patient with a known raw track),
// renders every public surface, and proves that none carries a raw coordinate (written with 3 or
// more decimals, with or without its sign), a fix's time of day, a coordinate off the public grid,
// or a date after the public cutoff.
import { eq } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import { journeys, patients, positions } from '$lib/server/db/schema';
import { seedDemo } from '$lib/server/db/seed/demo';
import { patientShareCard, shareCardSvg } from '$lib/server/og/card';
import { cellCentre, cellOf, type CellDeg } from '$lib/server/tracking/projection';
import { load as homePage } from '../../src/routes/+page.server';
import { GET as journeyApi } from '../../src/routes/api/patients/[slug]/journey/+server';
import { GET as occurrencesApi } from '../../src/routes/api/patients/[slug]/occurrences.csv/+server';
import { GET as patientApi } from '../../src/routes/api/patients/[slug]/+server';
import { GET as patientsApi } from '../../src/routes/api/patients/+server';
import { GET as storiesApi } from '../../src/routes/api/stories/+server';
import { load as patientPage } from '../../src/routes/patients/[slug]/+page.server';
import { load as patientsPage } from '../../src/routes/patients/+page.server';
import { GET as sitemap } from '../../src/routes/sitemap.xml/+server';
import { GET as atomFeed } from '../../src/routes/stories/feed.xml/+server';
import { GET as rssFeed } from '../../src/routes/stories/rss.xml/+server';
import { useTestDatabase } from '../setup/test-db';
import { publicEvent } from './public-event';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const SLUG = 'perla';

let rawForms: string[] = [];
let rawTimes: string[] = [];
let cutoffDate = '';
let cellDeg: CellDeg = 0.1;
let rawCount = 0;

/** Every way a coordinate could be written with 3 to 6 decimals, with and without its sign. */
function coordinateForms(n: number): string[] {
	const forms = new Set<string>();
	if (/\.\d{3}/.test(String(n))) forms.add(String(n));
	for (let digits = 3; digits <= 6; digits++) {
		forms.add(n.toFixed(digits));
		forms.add(Math.abs(n).toFixed(digits));
	}
	return [...forms];
}

beforeAll(async () => {
	await seedDemo(db());
	const [patient] = await db().select().from(patients).where(eq(patients.slug, SLUG));
	const raw = await db().select().from(positions).where(eq(positions.patientId, patient.id));
	rawCount = raw.length;
	rawForms = [
		...new Set(
			raw.flatMap((r) => [...coordinateForms(r.latitude), ...coordinateForms(r.longitude)])
		)
	];
	// A fix's time of day, as an ISO timestamp would write it (to the minute is enough).
	rawTimes = [...new Set(raw.map((r) => r.observedAt.toISOString().slice(0, 16)))];
	const [journey] = await db().select().from(journeys).where(eq(journeys.patientId, patient.id));
	cutoffDate = journey.cutoffDate;
	cellDeg = (journey.geojson as { properties: { cellDeg: CellDeg } }).properties.cellDeg;
}, 60_000);

function expectNoRawTrack(surface: string, text: string) {
	for (const form of rawForms) {
		expect(text.includes(form), `${surface} contains the raw coordinate ${form}`).toBe(false);
	}
	for (const time of rawTimes) {
		expect(text.includes(time), `${surface} contains the fix time ${time}`).toBe(false);
	}
}

/** Every [lon, lat] pair in a GeoJSON value is a cell centre; every date is on or before the cutoff. */
function expectOnGridAndDelayed(surface: string, geojson: unknown) {
	const pairs: number[][] = [];
	const walk = (value: unknown) => {
		if (Array.isArray(value)) {
			if (value.length === 2 && value.every((v) => typeof v === 'number')) pairs.push(value);
			else value.forEach(walk);
		} else if (value && typeof value === 'object') Object.values(value).forEach(walk);
	};
	walk(geojson);
	expect(pairs.length, `${surface} has positions`).toBeGreaterThan(0);
	for (const [lon, lat] of pairs) {
		// Cut vertices of the antimeridian split sit at ±180 with a grid latitude.
		if (Math.abs(lon) === 180) continue;
		const { row, col } = cellOf(lat, lon, cellDeg);
		expect(cellCentre(row, col, cellDeg), `${surface}: ${lon},${lat} is off the grid`).toEqual({
			lat,
			lon
		});
	}
	const dates = JSON.stringify(geojson).match(/\d{4}-\d{2}-\d{2}/g) ?? [];
	for (const date of dates)
		expect(date <= cutoffDate, `${surface}: ${date} is after the cutoff`).toBe(true);
}

describe('no public surface carries the raw track', () => {
	it('has a raw track in the demo to look for, some of it newer than the cutoff', () => {
		expect(rawCount).toBeGreaterThan(500);
		expect(rawTimes.some((t) => t.slice(0, 10) > cutoffDate)).toBe(true);
	});

	it('the checks themselves catch a leak', () => {
		expect(() => expectNoRawTrack('probe', `{"lat":${rawForms[0]}}`)).toThrow(/raw coordinate/);
		expect(() => expectNoRawTrack('probe', rawTimes[0])).toThrow(/fix time/);
		expect(() =>
			expectOnGridAndDelayed('probe', { coordinates: [-66.7039, 17.8874], date: cutoffDate })
		).toThrow(/off the grid/);
		const late = new Date(Date.parse(cutoffDate) + 86_400_000).toISOString().slice(0, 10);
		expect(() =>
			expectOnGridAndDelayed('probe', { coordinates: [-66.75, 17.85], d: late })
		).toThrow(/after the cutoff/);
	});

	it('the journey API and the Darwin Core export', async () => {
		const response = await journeyApi(publicEvent(`/api/patients/${SLUG}/journey`, { slug: SLUG }));
		expect(response.status).toBe(200);
		const text = await response.text();
		expectNoRawTrack('journey API', text);
		expectOnGridAndDelayed('journey API', JSON.parse(text));

		const csv = await (
			await occurrencesApi(publicEvent(`/api/patients/${SLUG}/occurrences.csv`, { slug: SLUG }))
		).text();
		expectNoRawTrack('Darwin Core CSV', csv);
		const rows = csv.trim().split('\r\n').slice(1);
		expect(rows.length).toBeGreaterThan(0);
		for (const row of rows) {
			// eventDate, decimalLatitude, decimalLongitude are columns 8–10 (no commas before them).
			const cols = row.split(',');
			const [lat, lon] = [Number(cols[8]), Number(cols[9])];
			const { row: r, col: c } = cellOf(lat, lon, cellDeg);
			expect(cellCentre(r, c, cellDeg)).toEqual({ lat, lon });
			for (const date of cols[7].split('/')) expect(date <= cutoffDate).toBe(true);
		}
	});

	it('the patient page, the lists, the APIs, feeds, sitemap and share card', async () => {
		const page = await patientPage(publicEvent(`/patients/${SLUG}`, { slug: SLUG }));
		const pageText = JSON.stringify(page);
		expectNoRawTrack('patient page', pageText);
		expectOnGridAndDelayed(
			'patient page journey',
			JSON.parse((page as { journeyJson: string }).journeyJson)
		);

		const surfaces: Array<[string, () => Promise<string>]> = [
			['/', async () => JSON.stringify(await homePage(publicEvent('/')))],
			['/patients', async () => JSON.stringify(await patientsPage(publicEvent('/patients')))],
			['/api/patients', async () => (await patientsApi(publicEvent('/api/patients'))).text()],
			[
				`/api/patients/${SLUG}`,
				async () => (await patientApi(publicEvent(`/api/patients/${SLUG}`, { slug: SLUG }))).text()
			],
			['/api/stories', async () => (await storiesApi(publicEvent('/api/stories?limit=50'))).text()],
			['/sitemap.xml', async () => (await sitemap(publicEvent('/sitemap.xml'))).text()],
			['/stories/feed.xml', async () => (await atomFeed(publicEvent('/stories/feed.xml'))).text()],
			['/stories/rss.xml', async () => (await rssFeed(publicEvent('/stories/rss.xml'))).text()],
			[
				'share card',
				async () => {
					const card = await patientShareCard(SLUG);
					return JSON.stringify(card) + (card ? shareCardSvg(card) : '');
				}
			]
		];
		for (const [surface, read] of surfaces) expectNoRawTrack(surface, await read());
	});
});
