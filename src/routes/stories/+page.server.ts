import { STORY_KINDS, type StoryKind } from '$lib/server/db/schema';
import { appOrigin } from '$lib/server/config';
import { publicRead } from '$lib/server/public-cache';
import { listPublishedStories } from '$lib/server/stories';
import type { PageServerLoad } from './$types';

const PAGE_SIZE = 12;

export const load: PageServerLoad = async ({ url }) => {
	// An unknown kind or a malformed cursor shows the first page of every story, not an error.
	const kindParam = url.searchParams.get('kind');
	const kind = STORY_KINDS.find((k) => k === kindParam) as StoryKind | undefined;
	const beforeParam = new Date(url.searchParams.get('before') ?? '');
	const before = Number.isNaN(beforeParam.getTime()) ? undefined : beforeParam;

	const stories = await publicRead(`stories:${kind}:${before?.toISOString()}`, () =>
		listPublishedStories({ kind, before, limit: PAGE_SIZE + 1 })
	);
	const more = stories.length > PAGE_SIZE;
	const shown = stories.slice(0, PAGE_SIZE);
	const origin = appOrigin();
	const next = new URLSearchParams();
	if (kind) next.set('kind', kind);
	if (more) next.set('before', shown[shown.length - 1].publishedAt.toISOString());

	return {
		stories: shown.map((story) => ({
			slug: story.slug,
			title: story.title,
			kind: story.kind,
			summary: story.summary,
			publishedAt: story.publishedAt,
			hero: story.hero,
			patients: story.patients
		})),
		kind: kind ?? null,
		paged: before !== undefined,
		nextPage: more ? `/stories?${next}` : null,
		canonical: `${origin}/stories${kind ? `?kind=${kind}` : ''}`,
		shareImage: `${origin}/og/stories.png`
	};
};
