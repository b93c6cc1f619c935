import { jsonError, jsonWithEtag } from '$lib/server/http';
import { getPublicPatient } from '$lib/server/patients';
import { parseStoryListQuery } from '$lib/server/public-queries';
import { listPublishedStories } from '$lib/server/stories';
import type { RequestHandler } from './$types';

/** Published stories, newest first; `?patient=slug` for one patient's timeline. */
export const GET: RequestHandler = async ({ url, request }) => {
	const query = parseStoryListQuery(url.searchParams);
	if (!query.ok) return jsonError(400, query.message);
	const { patient, kind, limit, before } = query.value;
	if (patient !== undefined && !(await getPublicPatient(patient))) {
		return jsonError(404, 'There is no public patient at this address.');
	}
	const stories = await listPublishedStories({ patientSlug: patient, kind, limit, before });
	const last = stories.at(-1);
	return jsonWithEtag(request, {
		stories: stories.map((story) => ({
			slug: story.slug,
			url: `/stories/${story.slug}`,
			title: story.title,
			kind: story.kind,
			summary: story.summary,
			publishedAt: story.publishedAt,
			hero: story.hero,
			patients: story.patients
		})),
		// The `before` value for the next page, when this one is full.
		next: stories.length === limit && last ? last.publishedAt.toISOString() : null
	});
};
