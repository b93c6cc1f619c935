import { error } from '@sveltejs/kit';
import { todayUtc } from '$lib/patient-days';
import { appOrigin } from '$lib/server/config';
import { getPublicJourney } from '$lib/server/journeys/public';
import { getPublicProfile } from '$lib/server/patients';
import { publicRead } from '$lib/server/public-cache';
import { getOrganisationSettings } from '$lib/server/settings';
import { listPublishedStories } from '$lib/server/stories';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params }) => {
	const found = await publicRead(`patient-page:${params.slug}`, async () => {
		const patient = await getPublicProfile(params.slug);
		if (!patient) return null;
		const [stories, journey, organisation] = await Promise.all([
			listPublishedStories({ patientSlug: patient.slug }),
			getPublicJourney(patient.slug),
			getOrganisationSettings()
		]);
		// Serialised once per cache lifetime (see the page for why a string).
		const journeyJson = journey ? JSON.stringify(journey.geojson) : null;
		return { patient, stories, journeyJson, organisation };
	});
	if (!found) error(404, 'Not found.');
	const { patient, stories, journeyJson, organisation } = found;
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
		// The stored public projection only: coarse cells, dates, rounded distance.
		journeyJson,
		distanceUnit: organisation.distanceUnit,
		canonical: `${origin}/patients/${patient.slug}`,
		shareImage: `${origin}/og/patients/${patient.slug}.png`
	};
};
