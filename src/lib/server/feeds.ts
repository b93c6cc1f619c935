import { Feed } from 'feed';
import { STORY_KIND_LABELS } from '$lib/stories';
import { appOrigin } from './config';
import type { PublicPhoto } from './patients';
import { getOrganisationSettings } from './settings';
import { listPublishedStoriesWithBody } from './stories';

export const FEED_SIZE = 30;

/** Root-relative links and images in cleaned story HTML made absolute for feed readers. */
export function absoluteUrls(html: string, origin: string): string {
	// sanitize-html writes every attribute in double quotes, and a quote inside text is escaped,
	// so this only ever meets real href/src attributes.
	return html.replace(/\b(href|src)="\/(?!\/)/g, `$1="${origin}/`);
}

const escapeAttribute = (text: string) =>
	text.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;').replace(/>/g, '&gt;');

/** The hero photo at the head of an entry; feed readers show no page around it. */
function heroHtml(hero: PublicPhoto | null): string {
	if (!hero) return '';
	return `<p><img src="${escapeAttribute(hero.src)}" alt="${escapeAttribute(hero.alt)}"></p>`;
}

/** The published stories as a feed (Atom or RSS 2.0 from the same items). */
export async function storiesFeed(): Promise<Feed> {
	const origin = appOrigin();
	const [settings, stories] = await Promise.all([
		getOrganisationSettings(),
		listPublishedStoriesWithBody({ limit: FEED_SIZE })
	]);
	const feed = new Feed({
		id: `${origin}/stories`,
		title: `${settings.displayName}: stories`,
		description:
			'News from our sea turtle hospital: admissions, recoveries, releases and journeys.',
		link: `${origin}/stories`,
		language: 'en',
		favicon: `${origin}/favicon.svg`,
		copyright: `© ${settings.legalName || settings.displayName}`,
		updated: stories.reduce<Date | undefined>(
			(latest, s) => (latest && latest > s.updatedAt ? latest : s.updatedAt),
			undefined
		),
		generator: false,
		feedLinks: { atom: `${origin}/stories/feed.xml`, rss: `${origin}/stories/rss.xml` },
		author: { name: settings.displayName, link: origin }
	});
	for (const story of stories) {
		const link = `${origin}/stories/${story.slug}`;
		feed.addItem({
			title: story.title,
			id: link,
			link,
			date: story.updatedAt,
			published: story.publishedAt,
			description: story.summary || undefined,
			content: absoluteUrls(heroHtml(story.hero) + story.bodyHtml, origin),
			category: [{ name: STORY_KIND_LABELS[story.kind], term: story.kind }],
			author: [{ name: settings.displayName, link: origin }]
		});
	}
	return feed;
}
