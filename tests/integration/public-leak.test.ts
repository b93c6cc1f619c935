// THE LEAK TEST. Loads the demo scenario, renders every public response built for patients,
// stories and releases (JSON API, pages' server data, feeds, sitemap, share-image data), and
// proves that none carries a staff-only value of any patient or release, nor names a hidden
// patient. Values are read from the database, so new demo data is covered without editing here.
import { getTableColumns } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import {
	SPECIES,
	STORY_KINDS,
	PATIENT_STATUSES,
	patients,
	releases,
	stories
} from '$lib/server/db/schema';
import { seedDemo } from '$lib/server/db/seed/demo';
import {
	patientShareCard,
	shareCardSvg,
	storiesShareCard,
	storyShareCard
} from '$lib/server/og/card';
import { STAFF_ONLY_PATIENT_COLUMNS, STAFF_ONLY_RELEASE_COLUMNS } from '$lib/server/staff-only';
import { load as homePage } from '../../src/routes/+page.server';
import { GET as patientApi } from '../../src/routes/api/patients/[slug]/+server';
import { GET as patientsApi } from '../../src/routes/api/patients/+server';
import { GET as storiesApi } from '../../src/routes/api/stories/+server';
import { GET as patientCard } from '../../src/routes/og/patients/[slug].png/+server';
import { load as patientPage } from '../../src/routes/patients/[slug]/+page.server';
import { load as patientsPage } from '../../src/routes/patients/+page.server';
import { GET as sitemap } from '../../src/routes/sitemap.xml/+server';
import { GET as atomFeed } from '../../src/routes/stories/feed.xml/+server';
import { GET as rssFeed } from '../../src/routes/stories/rss.xml/+server';
import { load as storyPage } from '../../src/routes/stories/[slug]/+page.server';
import { load as storiesPage } from '../../src/routes/stories/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { loadStatus, publicEvent } from './public-event';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

/** Every way a coordinate could be written with 3 or more decimals, with and without its sign. */
function coordinateForms(value: string | null): string[] {
	if (value === null) return [];
	const n = Number(value);
	const forms = new Set([value, String(n)]);
	for (let digits = 3; digits <= 6; digits++) {
		forms.add(n.toFixed(digits));
		forms.add(Math.abs(n).toFixed(digits));
	}
	return [...forms].filter((form) => /\.\d{3}/.test(form));
}

const COORDINATES = new Set([
	'strandingLatitude',
	'strandingLongitude',
	'siteLatitude',
	'siteLongitude'
]);
// Calendar days (stranding day, vet clearance day) also occur as public dates, such as the day of
// admission or of a story, so they are checked by column name rather than by value.
const DAYS = new Set(['strandedOn', 'vetClearedOn']);

interface Secret {
	where: string;
	value: string;
}

let secrets: Secret[] = [];
let hidden: { slug: string; name: string }[] = [];
let publicSlugs: string[] = [];
let storySlugs: string[] = [];
let unpublishedStorySlugs: string[] = [];

const snake = (key: string) => key.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`);
const STAFF_KEYS = [...STAFF_ONLY_PATIENT_COLUMNS, ...STAFF_ONLY_RELEASE_COLUMNS].flatMap((key) => [
	key,
	snake(key)
]);

function collectSecrets(
	rows: Record<string, unknown>[],
	columns: readonly string[],
	label: (row: Record<string, unknown>) => string
): Secret[] {
	const found: Secret[] = [];
	for (const row of rows) {
		for (const column of columns) {
			if (DAYS.has(column)) continue;
			const raw = row[column];
			const values = COORDINATES.has(column)
				? coordinateForms(raw as string | null)
				: [raw].flat().filter((v): v is string => typeof v === 'string' && v.trim() !== '');
			for (const value of values) found.push({ where: `${label(row)}.${column}`, value });
		}
	}
	return found;
}

beforeAll(async () => {
	await seedDemo(db());
	const patientRows = await db().select().from(patients);
	const releaseRows = await db().select().from(releases);
	const slugOf = new Map(patientRows.map((p) => [p.id, p.slug]));
	secrets = [
		...collectSecrets(patientRows, STAFF_ONLY_PATIENT_COLUMNS, (r) => String(r.slug)),
		...collectSecrets(
			releaseRows,
			STAFF_ONLY_RELEASE_COLUMNS,
			(r) => `release of ${slugOf.get(String(r.patientId))}`
		)
	];
	hidden = patientRows.filter((p) => p.publicTreatment === 'hidden');
	publicSlugs = patientRows.filter((p) => p.publicTreatment !== 'hidden').map((p) => p.slug);
	const storyRows = await db().select({ slug: stories.slug, status: stories.status }).from(stories);
	storySlugs = storyRows.filter((s) => s.status === 'published').map((s) => s.slug);
	unpublishedStorySlugs = storyRows.filter((s) => s.status !== 'published').map((s) => s.slug);
});

function keysIn(value: unknown, keys = new Set<string>()): Set<string> {
	if (Array.isArray(value)) for (const item of value) keysIn(item, keys);
	else if (value && typeof value === 'object') {
		for (const [key, inner] of Object.entries(value)) {
			keys.add(key);
			keysIn(inner, keys);
		}
	}
	return keys;
}

/** Fails with the surface and the column when anything staff-only shows up. */
function expectClean(surface: string, text: string, data?: unknown) {
	for (const secret of secrets) {
		expect(text.includes(secret.value), `${surface} leaks ${secret.where}: ${secret.value}`).toBe(
			false
		);
	}
	for (const patient of hidden) {
		expect(new RegExp(`\\b${patient.name}\\b`).test(text), `${surface} names ${patient.name}`).toBe(
			false
		);
		expect(text, `${surface} links ${patient.slug}`).not.toContain(`/patients/${patient.slug}`);
		expect(text, `${surface} lists ${patient.slug}`).not.toContain(`"${patient.slug}"`);
	}
	for (const key of STAFF_KEYS) {
		if (data !== undefined) {
			expect(keysIn(data).has(key), `${surface} has a ${key} field`).toBe(false);
		} else {
			expect(text, `${surface} mentions ${key}`).not.toContain(key);
		}
	}
}

async function responseText(surface: string, response: Response, status = 200): Promise<string> {
	expect(response.status, surface).toBe(status);
	return response.text();
}

async function checkJson(surface: string, response: Response, status = 200) {
	const text = await responseText(surface, response, status);
	expectClean(surface, text, JSON.parse(text));
}

async function checkLoad(surface: string, result: unknown) {
	const text = JSON.stringify(result);
	expectClean(surface, text, JSON.parse(text));
}

describe('no public response carries a staff-only value', () => {
	it('has staff-only values and hidden patients in the demo to look for', () => {
		const columns = new Set(secrets.map((s) => s.where.split('.').at(-1)));
		for (const column of [
			'strandingLatitude',
			'strandingLongitude',
			'strandingPlace',
			'flipperTags',
			'microchip',
			'transmitterId',
			'medicalNotes',
			'agencyCaseNumber',
			'siteLatitude',
			'siteLongitude',
			'siteNotes',
			'authorisationRef',
			'vetClearedBy'
		]) {
			expect(columns.has(column), column).toBe(true);
		}
		expect(hidden.length).toBeGreaterThan(0);
		expect(storySlugs.length).toBeGreaterThanOrEqual(6);
		expect(unpublishedStorySlugs.length).toBeGreaterThanOrEqual(2);
	});

	it('the checker itself catches a leak', () => {
		const [secret] = secrets;
		expect(() => expectClean('probe', `{"x":"${secret.value}"}`)).toThrow(/leaks/);
		expect(() => expectClean('probe', '{}', { microchip: 'x' })).toThrow(/microchip/);
		expect(() => expectClean('probe', `About ${hidden[0].name}.`)).toThrow(/names/);
	});

	it('GET /api/patients with every filter', async () => {
		const queries = [
			'',
			...SPECIES.map((s) => `species=${s}`),
			...PATIENT_STATUSES.map((s) => `status=${s}`),
			`q=${encodeURIComponent(hidden[0].name)}`,
			'q=a'
		];
		for (const query of queries) {
			await checkJson(
				`/api/patients?${query}`,
				await patientsApi(publicEvent(`/api/patients?${query}`))
			);
		}
	});

	it('GET /api/patients/[slug] for every patient, hidden ones included', async () => {
		for (const slug of publicSlugs) {
			await checkJson(
				`/api/patients/${slug}`,
				await patientApi(publicEvent(`/api/patients/${slug}`, { slug }))
			);
		}
		for (const { slug } of hidden) {
			await checkJson(
				`/api/patients/${slug}`,
				await patientApi(publicEvent(`/api/patients/${slug}`, { slug })),
				404
			);
		}
	});

	it('GET /api/stories, whole and per patient', async () => {
		await checkJson('/api/stories', await storiesApi(publicEvent('/api/stories?limit=50')));
		for (const slug of publicSlugs) {
			await checkJson(
				`/api/stories?patient=${slug}`,
				await storiesApi(publicEvent(`/api/stories?patient=${slug}`))
			);
		}
		for (const { slug } of hidden) {
			await checkJson(
				`/api/stories?patient=${slug}`,
				await storiesApi(publicEvent(`/api/stories?patient=${slug}`)),
				404
			);
		}
	});

	it('the pages: home, patients (with filters), each profile, stories, each story', async () => {
		await checkLoad('/', await homePage(publicEvent('/')));
		for (const query of ['', 'status=released', 'species=green', 'q=a']) {
			await checkLoad(`/patients?${query}`, await patientsPage(publicEvent(`/patients?${query}`)));
		}
		for (const slug of publicSlugs) {
			await checkLoad(
				`/patients/${slug}`,
				await patientPage(publicEvent(`/patients/${slug}`, { slug }))
			);
		}
		for (const { slug } of hidden) {
			expect(await loadStatus(() => patientPage(publicEvent(`/patients/${slug}`, { slug })))).toBe(
				404
			);
		}
		for (const kind of ['', ...STORY_KINDS]) {
			await checkLoad(
				`/stories?kind=${kind}`,
				await storiesPage(publicEvent(`/stories?kind=${kind}`))
			);
		}
		for (const slug of storySlugs) {
			await checkLoad(
				`/stories/${slug}`,
				await storyPage(publicEvent(`/stories/${slug}`, { slug }))
			);
		}
		for (const slug of unpublishedStorySlugs) {
			expect(await loadStatus(() => storyPage(publicEvent(`/stories/${slug}`, { slug })))).toBe(
				404
			);
		}
	});

	it('the Atom feed, the RSS feed and the sitemap', async () => {
		for (const [surface, handler] of [
			['/stories/feed.xml', atomFeed],
			['/stories/rss.xml', rssFeed],
			['/sitemap.xml', sitemap]
		] as const) {
			const text = await responseText(surface, (await handler(publicEvent(surface))) as Response);
			expectClean(surface, text);
			for (const slug of unpublishedStorySlugs)
				expect(text, `${surface} ${slug}`).not.toContain(slug);
		}
	});

	it('the share images: what they say, and that hidden patients have none', async () => {
		for (const slug of publicSlugs) {
			const card = await patientShareCard(slug);
			expect(card, slug).not.toBeNull();
			await checkLoad(`/og/patients/${slug}.png (text)`, card);
			// Letters are drawn as paths: no <text>, no font lookup, so nothing readable either.
			expect(shareCardSvg(card!)).not.toMatch(/<text|font-family/);
		}
		for (const slug of storySlugs) {
			await checkLoad(`/og/stories/${slug}.png (text)`, await storyShareCard(slug));
		}
		await checkLoad('/og/stories.png (text)', await storiesShareCard());
		for (const { slug } of hidden) {
			expect(await patientShareCard(slug)).toBeNull();
			expect(
				await loadStatus(() => patientCard(publicEvent(`/og/patients/${slug}.png`, { slug })))
			).toBe(404);
		}
	});

	it('the public column lists themselves hold no staff-only column', () => {
		const all = { ...getTableColumns(patients), ...getTableColumns(releases) };
		const staff = [...STAFF_ONLY_PATIENT_COLUMNS, ...STAFF_ONLY_RELEASE_COLUMNS].map(
			(key) => all[key as keyof typeof all]
		);
		expect(staff.every(Boolean)).toBe(true);
	});
});
