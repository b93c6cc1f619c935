import { withEtag, jsonError, strongEtag } from '$lib/server/http';
import { darwinCoreCsv } from '$lib/server/journeys/exports';
import { getPublicJourney } from '$lib/server/journeys/public';
import { getPublicPatient } from '$lib/server/patients';
import { getOrganisationSettings } from '$lib/server/settings';
import type { RequestHandler } from './$types';

/** The public journey as a Darwin Core occurrence CSV, generalised as the projection is. */
export const GET: RequestHandler = async ({ params, request }) => {
	const [patient, journey] = await Promise.all([
		getPublicPatient(params.slug),
		getPublicJourney(params.slug)
	]);
	if (!patient || !journey) return jsonError(404, 'There is no public journey for this patient.');
	const organisation = await getOrganisationSettings();
	const csv = darwinCoreCsv(patient, journey.geojson, organisation.displayName);
	return withEtag(request, csv, {
		etag: strongEtag(csv),
		headers: {
			'content-type': 'text/csv; charset=utf-8',
			'content-disposition': `attachment; filename="${patient.slug}-occurrences.csv"`
		}
	});
};
