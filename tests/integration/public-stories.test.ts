import { beforeAll, describe, expect, it } from 'vitest';
import {
	media,
	patientPhotos,
	patients,
	stories,
	storyPatients,
	STORY_STATUSES
} from '$lib/server/db/schema';
import { listPublicPatients } from '$lib/server/patients';
import { getPublishedStory, listPublishedStories } from '$lib/server/stories';
import { GET as storiesApi } from '../../src/routes/api/stories/+server';
import { load as patientPage } from '../../src/routes/patients/[slug]/+page.server';
import { GET as sitemap } from '../../src/routes/sitemap.xml/+server';
import { GET as atomFeed } from '../../src/routes/stories/feed.xml/+server';
import { GET as rssFeed } from '../../src/routes/stories/rss.xml/+server';
import { load as storyPage } from '../../src/routes/stories/[slug]/+page.server';
import { load as storiesPage } from '../../src/routes/stories/+page.server';
import { GET as storyCard } from '../../src/routes/og/stories/[slug].png/+server';
import { useTestDatabase } from '../setup/test-db';
import { loadStatus, publicEvent } from './public-event';

process.env.ORIGIN = 'https://tideward.test';
const db = useTestDatabase();

const HIDDEN_NAME = 'Sombra';

beforeAll(async () => {
	await db()
		.insert(patients)
		.values([
			{
				id: 'p-ola',
				slug: 'ola',
				name: 'Ola',
				species: 'loggerhead',
				lifeStage: 'juvenile',
				admittedOn: '2026-01-10',
				admissionReason: 'boat_strike',
				status: 'in_rehabilitation'
			},
			{
				id: 'p-sombra',
				slug: 'sombra',
				name: HIDDEN_NAME,
				species: 'green',
				lifeStage: 'juvenile',
				admittedOn: '2026-01-12',
				admissionReason: 'other',
				status: 'admitted',
				publicTreatment: 'hidden'
			}
		]);
	await db()
		.insert(media)
		.values([
			{ id: 'm-hero', alt: 'Ola in the deep pool', width: 2000, height: 1500 },
			{ id: 'm-small', alt: 'Ola at the scales', width: 600, height: 400 }
		]);
	await db()
		.insert(patientPhotos)
		.values([
			{ patientId: 'p-ola', mediaId: 'm-small', position: 1, caption: 'Weigh-in day' },
			{ patientId: 'p-ola', mediaId: 'm-hero', position: 0 }
		]);
	// One story in every status, each linked to both patients; only the published one is public.
	await db()
		.insert(stories)
		.values(
			STORY_STATUSES.map((status, i) => ({
				id: `s-${status}`,
				slug: `story-${status.replace('_', '-')}`,
				title: `Story that is ${status}`,
				kind: 'progress' as const,
				status,
				summary: `Summary ${status}`,
				bodyMarkdown: `SOURCE-${status}`,
				bodyHtml: `<p>Body of the ${status} story <a href="/patients/ola">Ola</a></p>`,
				heroMediaId: status === 'published' ? 'm-hero' : null,
				publishAt: status === 'scheduled' ? new Date('2026-01-01T00:00:00Z') : null,
				publishedAt: ['published', 'archived'].includes(status)
					? new Date(Date.UTC(2026, 1, 1 + i))
					: null
			}))
		);
	await db()
		.insert(stories)
		.values({
			id: 's-older',
			slug: 'older-news',
			title: 'Older news',
			kind: 'general',
			status: 'published',
			bodyHtml: '<p>Old</p>',
			publishedAt: new Date('2025-12-01T00:00:00Z')
		});
	await db()
		.insert(storyPatients)
		.values(
			STORY_STATUSES.flatMap((status) => [
				{ storyId: `s-${status}`, patientId: 'p-ola' },
				{ storyId: `s-${status}`, patientId: 'p-sombra' }
			])
		);
});

const UNPUBLISHED = STORY_STATUSES.filter((s) => s !== 'published');
const markers = (status: string) => [
	`story-${status.replace('_', '-')}`,
	`Story that is ${status}`,
	`Body of the ${status}`,
	`Summary ${status}`
];

function expectOnlyPublished(text: string) {
	expect(text).toContain('story-published');
	for (const status of UNPUBLISHED) {
		for (const marker of markers(status))
			expect(text, `${status}: ${marker}`).not.toContain(marker);
	}
	expect(text).not.toContain('SOURCE-');
}

describe('published stories only', () => {
	it('lists only published stories, newest first, and filters by kind and date', async () => {
		expect((await listPublishedStories({}, db())).map((s) => s.slug)).toEqual([
			'story-published',
			'older-news'
		]);
		expect((await listPublishedStories({ kind: 'general' }, db())).map((s) => s.slug)).toEqual([
			'older-news'
		]);
		expect(
			(await listPublishedStories({ before: new Date('2026-01-01T00:00:00Z') }, db())).map(
				(s) => s.slug
			)
		).toEqual(['older-news']);
		expect((await listPublishedStories({ limit: 1 }, db())).map((s) => s.slug)).toEqual([
			'story-published'
		]);
	});

	it('finds a story by slug only while it is published', async () => {
		expect(await getPublishedStory('story-published', db())).toMatchObject({
			title: 'Story that is published',
			bodyHtml: expect.stringContaining('Body of the published story')
		});
		for (const status of UNPUBLISHED) {
			expect(await getPublishedStory(`story-${status.replace('_', '-')}`, db())).toBeNull();
		}
	});

	it("never links or names a hidden patient, and lists no story by the hidden patient's slug", async () => {
		const [story] = await listPublishedStories({ patientSlug: 'ola' }, db());
		expect(story.patients).toEqual([{ slug: 'ola', name: 'Ola', species: 'loggerhead' }]);
		expect(await listPublishedStories({ patientSlug: 'sombra' }, db())).toEqual([]);
	});

	it('gives the hero photo from the media store with its alt text and stored widths', async () => {
		const story = await getPublishedStory('story-published', db());
		expect(story?.hero).toEqual({
			src: '/media/m-hero/960.webp',
			srcset:
				'/media/m-hero/480.webp 480w, /media/m-hero/960.webp 960w, /media/m-hero/1600.webp 1600w',
			alt: 'Ola in the deep pool'
		});
	});

	it('the JSON API', async () => {
		const response = (await storiesApi(publicEvent('/api/stories'))) as Response;
		expectOnlyPublished(await response.text());
		const forPatient = (await storiesApi(publicEvent('/api/stories?patient=ola'))) as Response;
		const text = await forPatient.text();
		expectOnlyPublished(text);
		expect(text).not.toContain(HIDDEN_NAME);
	});

	it('the Atom and RSS feeds, with absolute links and the sanitized body', async () => {
		for (const handler of [atomFeed, rssFeed]) {
			const response = (await handler(publicEvent('/stories/feed.xml'))) as Response;
			expect(response.status).toBe(200);
			const xml = await response.text();
			expectOnlyPublished(xml);
			expect(xml).toContain('https://tideward.test/stories/story-published');
			expect(xml).toContain('https://tideward.test/patients/ola');
			expect(xml).toContain('https://tideward.test/media/m-hero/960.webp');
			expect(xml).not.toContain(HIDDEN_NAME);
		}
		const atom = await ((await atomFeed(publicEvent('/stories/feed.xml'))) as Response).text();
		expect(atom).toMatch(/^<\?xml[^>]*\?>\s*<feed xmlns="http:\/\/www\.w3\.org\/2005\/Atom"/);
		const rss = (await rssFeed(publicEvent('/stories/rss.xml'))) as Response;
		expect(rss.headers.get('content-type')).toMatch(/^application\/rss\+xml/);
		expect(await rss.text()).toMatch(/<rss version="2\.0"/);
	});

	it('the sitemap', async () => {
		const response = (await sitemap(publicEvent('/sitemap.xml'))) as Response;
		const xml = await response.text();
		expectOnlyPublished(xml);
		for (const path of ['/', '/patients', '/patients/ola', '/stories', '/stranded']) {
			expect(xml).toContain(`<loc>https://tideward.test${path}</loc>`);
		}
		expect(xml).toContain('<loc>https://tideward.test/stories/older-news</loc>');
		expect(xml).not.toContain('/patients/sombra');
	});

	it('the pages and share images', async () => {
		const list = await storiesPage(publicEvent('/stories'));
		expectOnlyPublished(JSON.stringify(list));
		const profile = await patientPage(publicEvent('/patients/ola', { slug: 'ola' }));
		expectOnlyPublished(JSON.stringify(profile));
		const page = await storyPage(
			publicEvent('/stories/story-published', { slug: 'story-published' })
		);
		expect(JSON.stringify(page)).not.toContain(HIDDEN_NAME);
		for (const status of UNPUBLISHED) {
			const slug = `story-${status.replace('_', '-')}`;
			expect(await loadStatus(() => storyPage(publicEvent(`/stories/${slug}`, { slug })))).toBe(
				404
			);
			expect(
				await loadStatus(() => storyCard(publicEvent(`/og/stories/${slug}.png`, { slug })))
			).toBe(404);
		}
	});

	it('builds the story page head from the public origin', async () => {
		const page = (await storyPage(
			publicEvent('/stories/story-published', { slug: 'story-published' })
		)) as { canonical: string; shareImage: string };
		expect(page.canonical).toBe('https://tideward.test/stories/story-published');
		expect(page.shareImage).toBe('https://tideward.test/og/stories/story-published.png');
	});
});

describe('patient photos', () => {
	it('puts the first gallery photo on the card when staff chose no hero', async () => {
		const [card] = await listPublicPatients({ q: 'Ola' }, db());
		expect(card.photo).toMatchObject({
			src: '/media/m-hero/960.webp',
			alt: 'Ola in the deep pool'
		});
	});

	it('gives the gallery in order, with only the widths that were stored', async () => {
		const data = (await patientPage(publicEvent('/patients/ola', { slug: 'ola' }))) as {
			patient: { photos: unknown[] };
		};
		expect(data.patient.photos).toEqual([
			expect.objectContaining({ src: '/media/m-hero/960.webp', width: 2000, caption: null }),
			expect.objectContaining({
				src: '/media/m-small/480.webp',
				srcset: '/media/m-small/480.webp 480w',
				alt: 'Ola at the scales',
				caption: 'Weigh-in day'
			})
		]);
	});
});
