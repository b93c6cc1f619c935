import { todayUtc } from '$lib/patient-days';
import { listPublicPatients } from '$lib/server/patients';
import { publicRead } from '$lib/server/public-cache';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({
	patients: await publicRead('home:patients', () =>
		listPublicPatients({ inCareOnly: true, limit: 3 })
	),
	today: todayUtc()
});
