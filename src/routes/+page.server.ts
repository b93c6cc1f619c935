import { todayUtc } from '$lib/patient-days';
import { listPublicPatients } from '$lib/server/patients';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => ({
	patients: await listPublicPatients({ inCareOnly: true, limit: 3 }),
	today: todayUtc()
});
