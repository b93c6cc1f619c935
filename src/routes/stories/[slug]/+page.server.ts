import { error } from '@sveltejs/kit';
import { appOrigin } from '$lib/server/config';
import { publicRead } from '$lib/server/public-cache';
import { getPublishedStory } from '$lib/server/stories';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params }) => {
	const story = await publicRead(`story:${params.slug}`, () => getPublishedStory(params.slug));
	if (!story) error(404, 'Not found.');
	const origin = appOrigin();
	return {
		story: {
			slug: story.slug,
			title: story.title,
			kind: story.kind,
			summary: story.summary,
			publishedAt: story.publishedAt,
			hero: story.hero,
			patients: story.patients,
			// Cleaned with sanitize-html by the Newsroom at every save; never the markdown source.
			bodyHtml: story.bodyHtml
		},
		canonical: `${origin}/stories/${story.slug}`,
		shareImage: `${origin}/og/stories/${story.slug}.png`
	};
};
