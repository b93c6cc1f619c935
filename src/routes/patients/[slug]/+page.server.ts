import { error } from '@sveltejs/kit';
import { todayUtc } from '$lib/patient-days';
import { appOrigin } from '$lib/server/config';
import { getPublicProfile } from '$lib/server/patients';
import { listPublishedStories } from '$lib/server/stories';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params }) => {
	const patient = await getPublicProfile(params.slug);
	if (!patient) error(404, 'Not found.');
	const stories = await listPublishedStories({ patientSlug: patient.slug });
	const origin = appOrigin();
	return {
		patient,
		stories: stories.map((story) => ({
			slug: story.slug,
			title: story.title,
			kind: story.kind,
			summary: story.summary,
			publishedAt: story.publishedAt
		})),
		today: todayUtc(),
		canonical: `${origin}/patients/${patient.slug}`,
		shareImage: `${origin}/og/patients/${patient.slug}.png`
	};
};
