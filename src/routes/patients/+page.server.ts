import { todayUtc } from '$lib/patient-days';
import { listPublicPatients } from '$lib/server/patients';
import { publicRead } from '$lib/server/public-cache';
import { readPatientFilters } from '$lib/server/public-queries';
import type { PageServerLoad } from './$types';

// The first render filters on the server, so the page works (and a shared link reproduces the
// view) without JavaScript; the browser then filters through /api/patients.
export const load: PageServerLoad = async ({ url }) => {
	const { filters, problem } = readPatientFilters(url.searchParams);
	return {
		patients: await publicRead(`patients:${JSON.stringify(filters)}`, () =>
			listPublicPatients(filters)
		),
		filters,
		problem,
		today: todayUtc()
	};
};
