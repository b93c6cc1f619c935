// Importing positions and publishing the journey, against the real database: one upload is one
// transaction, bad rows are refused with a report, nothing is stored twice, faults lose nothing,
// and the public API serves only the stored projection.
import { isActionFailure } from '@sveltejs/kit';
import { and, count, eq } from 'drizzle-orm';
import * as geographiclib from 'geographiclib-geodesic';
import { Readable } from 'node:stream';
import { beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	journeys,
	organisationSettings,
	patientEvents,
	patients,
	positionImports,
	positions,
	releases,
	trackingProfiles,
	users
} from '$lib/server/db/schema';
import { importPositions, type ImportRequest } from '$lib/server/journeys/import';
import { recomputeJourney } from '$lib/server/journeys/recompute';
import { direct } from '$lib/server/tracking/geodesy';
import { parsePositions, type ParseItem } from '$lib/server/tracking/import';
import { cellCentre, cellOf } from '$lib/server/tracking/projection';
import type { Role } from '$lib/roles';
import { GET as journeyApi } from '../../src/routes/api/patients/[slug]/journey/+server';
import { GET as occurrencesApi } from '../../src/routes/api/patients/[slug]/occurrences.csv/+server';
import { GET as staffTrackApi } from '../../src/routes/api/tracking/[slug]/[which]/+server';
import { GET as journeyPng } from '../../src/routes/patients/[slug]/journey.png/+server';
import { actions as deskRules } from '../../src/routes/staff/tracking/+page.server';
import { actions as deskActions } from '../../src/routes/staff/tracking/[slug]/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { publicEvent } from './public-event';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const { Geodesic } =
	(geographiclib as unknown as { default?: typeof geographiclib }).default ?? geographiclib;

const DAY = 86_400_000;
const NOW = Date.parse('2026-06-01T12:00:00Z');
const RELEASE_DAY = '2026-03-01';
const RELEASE_MS = Date.parse(`${RELEASE_DAY}T00:00:00Z`);

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@example.test`;
	await db()
		.insert(users)
		.values({ id, email, name: `Person ${id.slice(0, 4)}` });
	return { id, email, name: `Person ${id.slice(0, 4)}`, roles };
}

/** A released patient with a transmitter, ready for positions. */
async function releasedPatient(slug: string) {
	const id = crypto.randomUUID();
	await db()
		.insert(patients)
		.values({
			id,
			slug,
			name: `Test ${slug}`,
			species: 'loggerhead',
			lifeStage: 'adult',
			admittedOn: '2026-01-01',
			admissionReason: 'entanglement',
			status: 'released',
			transmitterId: `TX-${slug}`
		});
	await db()
		.insert(releases)
		.values({
			id: crypto.randomUUID(),
			patientId: id,
			releaseOn: RELEASE_DAY,
			publicArea: 'off the test coast',
			habitat: 'other',
			doneAt: new Date(RELEASE_MS)
		});
	return { id, slug, transmitterId: `TX-${slug}` };
}

/**
 * A straight open-ocean track in the western Atlantic (well away from land): one GPS fix a day
 * from the release, 60 km apart along a geodesic heading east, from 30°N 70°W.
 */
function oceanCsv(days: number, start = 0, from = RELEASE_MS): string {
	let csv = 'timestamp,latitude,longitude,lc\n';
	let at = { lat: 30, lon: -70 };
	for (let d = 0; d < start; d++) at = direct(at, 90, 60_000);
	for (let d = start; d < days; d++) {
		const time = new Date(from + (d + 0.5) * DAY).toISOString();
		csv += `${time},${at.lat.toFixed(5)},${at.lon.toFixed(5)},G\n`;
		at = direct(at, 90, 60_000);
	}
	return csv;
}

const MAPPING = { time: 'timestamp', lat: 'latitude', lon: 'longitude', lc: 'lc' };

function csvItems(csv: string): AsyncGenerator<ParseItem> {
	return parsePositions(Readable.from([csv]), { format: 'csv', mapping: MAPPING, now: NOW });
}

function request(p: { id: string; transmitterId: string }, extra: Partial<ImportRequest> = {}) {
	return {
		patientId: p.id,
		transmitterId: p.transmitterId,
		fileName: 'track.csv',
		format: 'csv' as const,
		policy: 'refuse_file' as const,
		userId: null,
		now: NOW,
		...extra
	};
}

async function positionCount(patientId: string): Promise<number> {
	const [row] = await db()
		.select({ n: count() })
		.from(positions)
		.where(eq(positions.patientId, patientId));
	return row.n;
}

describe('importing positions', () => {
	it('stores a clean file, cleans it and publishes the projection in the same transaction', async () => {
		const p = await releasedPatient('imp-clean');
		const report = await importPositions(csvItems(oceanCsv(40)), request(p), db());
		expect(report).toMatchObject({
			stored: true,
			rowsRead: 40,
			rowsAdded: 40,
			rowsAlreadyStored: 0,
			rowsRefused: 0,
			problems: []
		});
		expect(await positionCount(p.id)).toBe(40);
		const kept = await db()
			.select({ n: count() })
			.from(positions)
			.where(and(eq(positions.patientId, p.id), eq(positions.status, 'kept')));
		expect(kept[0].n).toBe(40);
		const [journey] = await db().select().from(journeys).where(eq(journeys.patientId, p.id));
		// 7-day delay: fixes of days 0..84 exist but only 40 were sent; all are older than the cutoff.
		expect(journey.cutoffDate).toBe('2026-05-25');
		const [profile] = await db()
			.select()
			.from(trackingProfiles)
			.where(eq(trackingProfiles.patientId, p.id));
		// Checked against geographiclib-geodesic (Karney 2013) summed over the same stored
		// coordinates, to 1 mm; about 39 × 60 km, as the track was laid out.
		const stored = await db()
			.select({ lat: positions.latitude, lon: positions.longitude })
			.from(positions)
			.where(eq(positions.patientId, p.id))
			.orderBy(positions.observedAt);
		let expected = 0;
		for (let i = 1; i < stored.length; i++) {
			const a = stored[i - 1];
			const b = stored[i];
			expected += Geodesic.WGS84.Inverse(a.lat, a.lon, b.lat, b.lon).s12!;
		}
		expect(Math.abs(profile.publicDistanceMetres - expected)).toBeLessThan(0.001);
		expect(Math.abs(expected - 39 * 60_000)).toBeLessThan(10);
	});

	it('adds nothing twice when overlapping data is uploaded again', async () => {
		const p = await releasedPatient('imp-again');
		await importPositions(csvItems(oceanCsv(20)), request(p), db());
		const again = await importPositions(csvItems(oceanCsv(30)), request(p), db());
		expect(again).toMatchObject({
			stored: true,
			rowsRead: 30,
			rowsAdded: 10,
			rowsAlreadyStored: 20
		});
		expect(await positionCount(p.id)).toBe(30);
		const imports = await db()
			.select()
			.from(positionImports)
			.where(eq(positionImports.patientId, p.id));
		expect(imports).toHaveLength(2);
	});

	const BAD =
		'timestamp,latitude,longitude,lc\n' +
		'2026-03-02T10:00:00Z,30.1,-70.1,G\n' +
		'2026-03-03T10:00:00Z,95.5,-70.2,G\n' +
		'2026-03-04T10:00:00Z,30.3,-70.3,Q\n' +
		'2026-03-05T10:00:00Z,30.4,-70.4,2\n';

	it('refuses a file with bad rows as a whole, listing row, column and what is wrong', async () => {
		const p = await releasedPatient('imp-refuse');
		const report = await importPositions(csvItems(BAD), request(p), db());
		expect(report.stored).toBe(false);
		expect(report.rowsRefused).toBe(2);
		expect(report.problems.map((x) => [x.row, x.column])).toEqual([
			[3, 'latitude'],
			[4, 'lc']
		]);
		expect(report.problems[0].message).toMatch(/latitude/i);
		expect(await positionCount(p.id)).toBe(0);
		const imports = await db()
			.select()
			.from(positionImports)
			.where(eq(positionImports.patientId, p.id));
		expect(imports).toHaveLength(0);
	});

	it('imports the good rows and lists the bad ones when asked to', async () => {
		const p = await releasedPatient('imp-skip');
		const report = await importPositions(
			csvItems(BAD),
			request(p, { policy: 'skip_bad_rows' }),
			db()
		);
		expect(report).toMatchObject({ stored: true, rowsRead: 4, rowsAdded: 2, rowsRefused: 2 });
		expect(await positionCount(p.id)).toBe(2);
		const [record] = await db()
			.select()
			.from(positionImports)
			.where(eq(positionImports.patientId, p.id));
		expect(record.problems.map((x) => x.row)).toEqual([3, 4]);
	});

	it('loses nothing and stores nothing when the file breaks off or the reading fails midway', async () => {
		const p = await releasedPatient('imp-fault');
		await importPositions(csvItems(oceanCsv(10)), request(p), db());
		const before = await positionCount(p.id);

		// A GeoJSON file cut off after a few features: a file-level error after rows were read.
		const good = JSON.stringify({
			type: 'Feature',
			geometry: { type: 'Point', coordinates: [-60, 20] },
			properties: { timestamp: '2026-04-01T00:00:00Z', lc: '2' }
		});
		const cut = `{"type":"FeatureCollection","features":[${good},${good.replace('04-01', '04-02')},{"type":"Fea`;
		await expect(
			importPositions(
				parsePositions(Readable.from([cut]), { format: 'geojson', now: NOW }),
				request(p, { format: 'geojson', policy: 'skip_bad_rows' }),
				db()
			)
		).rejects.toThrow();

		// A reader that fails after 6,000 good rows (past the first batch of 5,000 written to the
		// database).
		async function* failing(): AsyncGenerator<ParseItem> {
			for (let i = 0; i < 7000; i++) {
				if (i === 6000) throw new Error('connection reset while reading the upload');
				yield {
					ok: true,
					position: {
						row: i + 2,
						time: RELEASE_MS + 20 * DAY + i * 3_600_000,
						lat: 25 + i * 0.0001,
						lon: -60,
						lc: '2',
						semiMajorM: null,
						semiMinorM: null,
						orientationDeg: null,
						errorRadiusM: null
					}
				};
			}
		}
		await expect(importPositions(failing(), request(p), db())).rejects.toThrow(/connection reset/);
		expect(await positionCount(p.id)).toBe(before);
	});

	it('stores a waypoint event once per step and a last-signal event when the transmitter falls silent', async () => {
		const p = await releasedPatient('imp-steps');
		const events = (kind: 'waypoint' | 'last_signal') =>
			db()
				.select({ key: patientEvents.dedupeKey })
				.from(patientEvents)
				.where(and(eq(patientEvents.patientId, p.id), eq(patientEvents.kind, kind)));
		const keys = (kms: number[]) => kms.map((km) => `waypoint:${p.id}:${km}km`).sort();

		// Uploaded the day after the last fix (day 39.5): with the 7-day delay the public track
		// ends on day 33.5, 33 legs × 60 km = 1,980 km, past the 500, 1,000 and 1,500 km steps.
		const nextDay = RELEASE_MS + 41 * DAY;
		await importPositions(csvItems(oceanCsv(40)), request(p, { now: nextDay }), db());
		expect((await events('waypoint')).map((e) => e.key).sort()).toEqual(keys([500, 1000, 1500]));
		expect(await events('last_signal')).toHaveLength(0);

		// Two months later every fix is public (2,340 km: the 2,000 km step) and the transmitter
		// has been silent for more than 30 days.
		await db().transaction((tx) => recomputeJourney(tx, p.id, NOW));
		await db().transaction((tx) => recomputeJourney(tx, p.id, NOW + DAY));
		expect((await events('waypoint')).map((e) => e.key).sort()).toEqual(
			keys([500, 1000, 1500, 2000])
		);
		expect(await events('last_signal')).toHaveLength(1);
	});

	it('sends no automatic milestone for a patient that died', async () => {
		const p = await releasedPatient('imp-died');
		await db().update(patients).set({ status: 'died' }).where(eq(patients.id, p.id));
		await importPositions(csvItems(oceanCsv(40)), request(p), db());
		const events = await db().select().from(patientEvents).where(eq(patientEvents.patientId, p.id));
		expect(events).toEqual([]);
	});
});

describe('the journey API', () => {
	let slug: string;
	beforeAll(async () => {
		const p = await releasedPatient('api-journey');
		slug = p.slug;
		// A fix a day for the last 20 days: the last 7 must not be public.
		await importPositions(
			parsePositions(Readable.from([oceanCsv(20, 0, Date.now() - 20 * DAY)]), {
				format: 'csv',
				mapping: MAPPING,
				now: Date.now()
			}),
			request(p, { now: Date.now() }),
			db()
		);
	});

	it('answers GeoJSON of grid cell centres and dates, with an ETag and 304', async () => {
		const response = await journeyApi(publicEvent(`/api/patients/${slug}/journey`, { slug }));
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toMatch(/geo\+json/);
		const body = await response.json();
		expect(body.type).toBe('FeatureCollection');
		const cutoff = body.properties.cutoffDate as string;
		for (const feature of body.features) {
			if (feature.properties.kind !== 'cell') continue;
			const [lon, lat] = feature.geometry.coordinates;
			const { row, col } = cellOf(lat, lon, 0.1);
			expect(cellCentre(row, col, 0.1)).toEqual({ lat, lon });
			expect(feature.properties.lastDate <= cutoff).toBe(true);
			expect(Object.keys(feature.properties).sort()).toEqual(['firstDate', 'kind', 'lastDate']);
		}
		const etag = response.headers.get('etag')!;
		const again = await journeyApi(
			publicEvent(`/api/patients/${slug}/journey`, { slug }, { 'if-none-match': etag })
		);
		expect(again.status).toBe(304);
	});

	it('draws the still map as a PNG from the stored projection, with an ETag', async () => {
		const response = await journeyPng(publicEvent(`/patients/${slug}/journey.png`, { slug }));
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toBe('image/png');
		const bytes = Buffer.from(await response.arrayBuffer());
		// PNG signature (ISO/IEC 15948, 5.2) and the IHDR size: 600 × 340.
		expect(bytes.subarray(0, 8)).toEqual(Buffer.from([137, 80, 78, 71, 13, 10, 26, 10]));
		expect([bytes.readUInt32BE(16), bytes.readUInt32BE(20)]).toEqual([600, 340]);
		const again = await journeyPng(
			publicEvent(
				`/patients/${slug}/journey.png`,
				{ slug },
				{
					'if-none-match': response.headers.get('etag')!
				}
			)
		);
		expect(again.status).toBe(304);
	});

	it('answers 404 for a hidden patient and for one never released', async () => {
		await db().update(patients).set({ publicTreatment: 'hidden' }).where(eq(patients.slug, slug));
		const hidden = await journeyApi(publicEvent(`/api/patients/${slug}/journey`, { slug }));
		expect(hidden.status).toBe(404);
		await expect(
			journeyPng(publicEvent(`/patients/${slug}/journey.png`, { slug }))
		).rejects.toMatchObject({ status: 404 });
		await db().update(patients).set({ publicTreatment: 'shown' }).where(eq(patients.slug, slug));
		const unknown = await journeyApi(
			publicEvent('/api/patients/nobody/journey', { slug: 'nobody' })
		);
		expect(unknown.status).toBe(404);
	});

	it('exports Darwin Core occurrences with the generalisation recorded', async () => {
		const response = await occurrencesApi(
			publicEvent(`/api/patients/${slug}/occurrences.csv`, { slug })
		);
		expect(response.status).toBe(200);
		const [header, first] = (await response.text()).split('\r\n');
		expect(header.split(',')).toContain('coordinateUncertaintyInMeters');
		expect(header.split(',')).toContain('dataGeneralizations');
		expect(first).toContain('Caretta caretta');
		expect(first).toContain('MachineObservation');
	});

	it('gives the raw track only to tracking staff', async () => {
		const asUser = (user: SessionUser | null) =>
			({
				...(publicEvent(`/api/tracking/${slug}/raw`, { slug, which: 'raw' }) as object),
				locals: { user, session: null, requestId: 'test' }
			}) as never;
		const status = async (user: SessionUser | null) => {
			try {
				return (await staffTrackApi(asUser(user))).status;
			} catch (error) {
				return (error as { status: number }).status;
			}
		};
		expect(await status(null)).toBe(401);
		expect(await status(await person(['supporter']))).toBe(403);
		expect(await status(await person(['educator']))).toBe(403);
		expect(await status(await person(['tracker']))).toBe(200);
	});
});

describe('the desk settings form', () => {
	function formEvent(slug: string, user: SessionUser, form: Record<string, string>) {
		const body = new FormData();
		for (const [k, v] of Object.entries(form)) body.append(k, v);
		const url = new URL(`http://localhost/staff/tracking/${slug}?/settings`);
		return {
			request: new Request(url, { method: 'POST', body }),
			url,
			params: { slug },
			locals: { user, session: null, requestId: 'test' },
			cookies: { get: () => undefined, set: () => {}, delete: () => {} },
			getClientAddress: () => '127.0.0.1'
		} as never;
	}

	it('refuses a delay under 7 days with a field message and changes nothing', async () => {
		const p = await releasedPatient('desk-settings');
		const tracker = await person(['tracker']);
		const result = await deskActions.settings(
			formEvent(p.slug, tracker, {
				delayDays: '3',
				cellDeg: '0.1',
				minimumClass: 'B',
				maxSpeedMs: ''
			})
		);
		expect(isActionFailure(result)).toBe(true);
		expect(JSON.stringify(result)).toMatch(/cannot be shorter than 7 days/);
		const rows = await db()
			.select()
			.from(trackingProfiles)
			.where(eq(trackingProfiles.patientId, p.id));
		expect(rows.every((r) => r.delayDays === 7)).toBe(true);

		const saved = await deskActions.settings(
			formEvent(p.slug, tracker, {
				delayDays: '14',
				cellDeg: '0.25',
				minimumClass: '1',
				maxSpeedMs: '1.5'
			})
		);
		expect(isActionFailure(saved)).toBe(false);
		const [profile] = await db()
			.select()
			.from(trackingProfiles)
			.where(eq(trackingProfiles.patientId, p.id));
		expect(profile).toMatchObject({
			delayDays: 14,
			cellDeg: '0.25',
			minimumClass: '1',
			maxSpeedMs: 1.5
		});
	});

	it('saves the organisation-wide rules only when they are sensible, and recomputes', async () => {
		const tracker = await person(['tracker']);
		const rules = (form: Record<string, string>) => {
			const event = formEvent('', tracker, form) as unknown as { url: URL; params: object };
			return deskRules.settings({ ...event, params: {} } as never);
		};
		const good = { waypointStepKm: '250', silenceDays: '20', inlandMetres: '8000' };
		const none = await rules(good);
		expect(isActionFailure(none) && none.status).toBe(409);

		await db()
			.insert(organisationSettings)
			.values({ id: 1, displayName: 'Test', legalName: 'Test' });
		const bad = await rules({ waypointStepKm: '0', silenceDays: 'soon', inlandMetres: '8000' });
		expect(isActionFailure(bad)).toBe(true);
		expect(JSON.stringify(bad)).toMatch(/waypoint step must be at least 50 km/);
		expect(JSON.stringify(bad)).toMatch(/silence period as a whole number/);
		const [unchanged] = await db().select().from(organisationSettings);
		expect(unchanged).toMatchObject({ waypointStepKm: 500, silenceDays: 30, inlandMetres: 5000 });

		expect(isActionFailure(await rules(good))).toBe(false);
		const [saved] = await db().select().from(organisationSettings);
		expect(saved).toMatchObject({ waypointStepKm: 250, silenceDays: 20, inlandMetres: 8000 });
	});
});
