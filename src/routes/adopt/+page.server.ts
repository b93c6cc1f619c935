import { patientMostInNeed } from '$lib/server/adoptions/checkout';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ setHeaders }) => {
	setHeaders({ 'cache-control': 'no-store' });
	return { patient: await patientMostInNeed() };
};
