import { beforeAll, describe, expect, it } from 'vitest';
import { patients, releases, stories, storyPatients } from '$lib/server/db/schema';
import { GET as patientApi } from '../../src/routes/api/patients/[slug]/+server';
import { GET as patientsApi } from '../../src/routes/api/patients/+server';
import { GET as storiesApi } from '../../src/routes/api/stories/+server';
import { load as patientsPage } from '../../src/routes/patients/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { publicEvent } from './public-event';

const db = useTestDatabase();

function patient(
	slug: string,
	name: string,
	values: Partial<typeof patients.$inferInsert> = {}
): typeof patients.$inferInsert {
	return {
		id: `id-${slug}`,
		slug,
		name,
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-03-02',
		admissionReason: 'entanglement',
		status: 'in_rehabilitation',
		...values
	};
}

beforeAll(async () => {
	await db()
		.insert(patients)
		.values([
			patient('arena', 'Arena'),
			patient('arenilla', 'Arenilla', { species: 'hawksbill', status: 'admitted' }),
			patient('salida', 'Salida', { species: 'hawksbill', status: 'released' }),
			patient('cien', '100% Tortuga', { species: 'loggerhead' }),
			patient('escondida', 'Arena Escondida', { publicTreatment: 'hidden' })
		]);
	await db()
		.insert(releases)
		.values({
			id: 'rel-salida',
			patientId: 'id-salida',
			releaseOn: '2026-04-01',
			publicArea: 'off the east point',
			habitat: 'beach',
			authorisationRef: 'REF-1',
			vetClearedBy: 'Dr. Test',
			vetClearedOn: '2026-03-30',
			doneAt: new Date('2026-04-01T10:00:00Z')
		});
	await db()
		.insert(stories)
		.values([
			{
				id: 's1',
				slug: 'arena-swims',
				title: 'Arena swims',
				kind: 'progress',
				status: 'published',
				publishedAt: new Date('2026-04-02T10:00:00Z')
			},
			{
				id: 's2',
				slug: 'arena-eats',
				title: 'Arena eats',
				kind: 'admission',
				status: 'published',
				publishedAt: new Date('2026-03-03T10:00:00Z')
			}
		]);
	await db()
		.insert(storyPatients)
		.values([
			{ storyId: 's1', patientId: 'id-arena' },
			{ storyId: 's2', patientId: 'id-arena' },
			{ storyId: 's2', patientId: 'id-escondida' }
		]);
});

async function getJson(handler: (event: never) => unknown, path: string, params = {}) {
	const response = (await handler(publicEvent(path, params))) as Response;
	return { response, body: await response.json() };
}

const slugs = (body: { patients: { slug: string }[] }) => body.patients.map((p) => p.slug).sort();

describe('GET /api/patients', () => {
	it('lists every public patient and never a hidden one', async () => {
		const { response, body } = await getJson(patientsApi, '/api/patients');
		expect(response.status).toBe(200);
		expect(slugs(body)).toEqual(['arena', 'arenilla', 'cien', 'salida']);
	});

	it('filters by species and by status, together', async () => {
		expect(slugs((await getJson(patientsApi, '/api/patients?species=hawksbill')).body)).toEqual([
			'arenilla',
			'salida'
		]);
		expect(slugs((await getJson(patientsApi, '/api/patients?status=released')).body)).toEqual([
			'salida'
		]);
		expect(
			slugs((await getJson(patientsApi, '/api/patients?species=hawksbill&status=admitted')).body)
		).toEqual(['arenilla']);
		expect(slugs((await getJson(patientsApi, '/api/patients?species=leatherback')).body)).toEqual(
			[]
		);
	});

	it('searches names case-insensitively after trimming, and takes % and _ literally', async () => {
		expect(slugs((await getJson(patientsApi, '/api/patients?q=%20%20aREn%20')).body)).toEqual([
			'arena',
			'arenilla'
		]);
		expect(slugs((await getJson(patientsApi, '/api/patients?q=100%25')).body)).toEqual(['cien']);
		expect(slugs((await getJson(patientsApi, '/api/patients?q=%25')).body)).toEqual(['cien']);
		expect(slugs((await getJson(patientsApi, '/api/patients?q=_')).body)).toEqual([]);
		// The hidden patient's name contains "Arena" too, and is still not found.
		expect(slugs((await getJson(patientsApi, '/api/patients?q=escondida')).body)).toEqual([]);
	});

	it('treats empty values (a GET form sending "all") as no filter', async () => {
		const { body } = await getJson(patientsApi, '/api/patients?species=&status=&q=%20');
		expect(slugs(body)).toHaveLength(4);
	});

	it('carries the completed release day for released patients', async () => {
		const { body } = await getJson(patientsApi, '/api/patients?status=released');
		expect(body.patients[0]).toMatchObject({ slug: 'salida', releasedOn: '2026-04-01' });
	});

	it.each([
		['species=dolphin', /species must be one of/],
		['status=lost', /status must be one of/],
		[`q=${'a'.repeat(61)}`, /at most 60 characters/],
		['species=green&species=hawksbill', /at most once/]
	])('refuses %s with 400 and a JSON message', async (query, message) => {
		const { response, body } = await getJson(patientsApi, `/api/patients?${query}`);
		expect(response.status).toBe(400);
		expect(response.headers.get('content-type')).toMatch(/application\/json/);
		expect(body.message).toMatch(message);
		expect(response.headers.get('etag')).toBeNull();
	});

	it('accepts a search of exactly 60 characters', async () => {
		const { response } = await getJson(patientsApi, `/api/patients?q=${'a'.repeat(60)}`);
		expect(response.status).toBe(200);
	});

	it('answers 304 to a matching If-None-Match, and 200 when the list changed', async () => {
		const first = (await patientsApi(publicEvent('/api/patients?species=green'))) as Response;
		const etag = first.headers.get('etag')!;
		expect(etag).toMatch(/^"[\w-]{43}"$/);
		expect(first.headers.get('cache-control')).toBe('public, max-age=60');

		const again = (await patientsApi(
			publicEvent('/api/patients?species=green', {}, { 'if-none-match': etag })
		)) as Response;
		expect(again.status).toBe(304);
		expect(await again.text()).toBe('');

		const other = (await patientsApi(
			publicEvent('/api/patients?species=hawksbill', {}, { 'if-none-match': etag })
		)) as Response;
		expect(other.status).toBe(200);
	});
});

describe('GET /api/patients/[slug]', () => {
	it('returns the public profile with its public release area', async () => {
		const { response, body } = await getJson(patientApi, '/api/patients/salida', {
			slug: 'salida'
		});
		expect(response.status).toBe(200);
		expect(body.patient).toMatchObject({
			slug: 'salida',
			release: { releaseOn: '2026-04-01', publicArea: 'off the east point' }
		});
		expect(JSON.stringify(body)).not.toMatch(/REF-1|Dr\. Test|authorisation|vetCleared/);
	});

	it('answers the same JSON 404 for a hidden and an unknown patient', async () => {
		for (const slug of ['escondida', 'nobody']) {
			const { response, body } = await getJson(patientApi, `/api/patients/${slug}`, { slug });
			expect(response.status).toBe(404);
			expect(body).toEqual({ message: 'There is no public patient at this address.' });
		}
	});

	it('answers 304 to a matching If-None-Match', async () => {
		const first = (await patientApi(
			publicEvent('/api/patients/arena', { slug: 'arena' })
		)) as Response;
		const again = (await patientApi(
			publicEvent(
				'/api/patients/arena',
				{ slug: 'arena' },
				{ 'if-none-match': first.headers.get('etag')! }
			)
		)) as Response;
		expect(again.status).toBe(304);
	});
});

describe('GET /api/stories', () => {
	it("lists a patient's published stories newest first, naming public patients only", async () => {
		const { response, body } = await getJson(storiesApi, '/api/stories?patient=arena');
		expect(response.status).toBe(200);
		expect(body.stories.map((s: { slug: string }) => s.slug)).toEqual([
			'arena-swims',
			'arena-eats'
		]);
		expect(body.stories[1].patients).toEqual([{ slug: 'arena', name: 'Arena', species: 'green' }]);
		expect(JSON.stringify(body)).not.toMatch(/escondida/i);
	});

	it('answers 404 for a hidden or unknown patient and 400 for a malformed one', async () => {
		expect((await getJson(storiesApi, '/api/stories?patient=escondida')).response.status).toBe(404);
		expect((await getJson(storiesApi, '/api/stories?patient=nobody')).response.status).toBe(404);
		const bad = await getJson(storiesApi, '/api/stories?patient=../etc');
		expect(bad.response.status).toBe(400);
		expect(bad.body.message).toMatch(/patient/);
	});

	it.each(['kind=rumour', 'limit=0', 'limit=51', 'limit=ten', 'before=yesterday'])(
		'refuses %s with 400',
		async (query) => {
			const { response, body } = await getJson(storiesApi, `/api/stories?${query}`);
			expect(response.status).toBe(400);
			expect(typeof body.message).toBe('string');
		}
	);

	it('pages with limit and before, and filters by kind', async () => {
		const first = await getJson(storiesApi, '/api/stories?limit=1');
		expect(first.body.stories.map((s: { slug: string }) => s.slug)).toEqual(['arena-swims']);
		const next = await getJson(
			storiesApi,
			`/api/stories?limit=1&before=${encodeURIComponent(first.body.next)}`
		);
		expect(next.body.stories.map((s: { slug: string }) => s.slug)).toEqual(['arena-eats']);
		const kind = await getJson(storiesApi, '/api/stories?kind=admission');
		expect(kind.body.stories.map((s: { slug: string }) => s.slug)).toEqual(['arena-eats']);
	});

	it('answers 304 to a matching If-None-Match', async () => {
		const first = (await storiesApi(publicEvent('/api/stories?patient=arena'))) as Response;
		const again = (await storiesApi(
			publicEvent('/api/stories?patient=arena', {}, { 'if-none-match': first.headers.get('etag')! })
		)) as Response;
		expect(again.status).toBe(304);
	});
});

describe('/patients page load', () => {
	it('renders the first view from the query string, as the API would', async () => {
		const data = (await patientsPage(publicEvent('/patients?species=hawksbill&q=sal'))) as {
			patients: { slug: string }[];
			filters: unknown;
			problem: string | null;
			today: string;
		};
		expect(data.patients.map((p) => p.slug)).toEqual(['salida']);
		expect(data.filters).toEqual({ species: 'hawksbill', q: 'sal' });
		expect(data.problem).toBeNull();
		expect(data.today).toMatch(/^\d{4}-\d{2}-\d{2}$/);
	});

	it('drops a bad value with a message and keeps the good ones', async () => {
		const data = (await patientsPage(publicEvent('/patients?species=dolphin&status=released'))) as {
			patients: { slug: string }[];
			filters: unknown;
			problem: string | null;
		};
		expect(data.filters).toEqual({ status: 'released' });
		expect(data.patients.map((p) => p.slug)).toEqual(['salida']);
		expect(data.problem).toMatch(/species must be one of/);
	});
});
