import { listPublicPatients } from '$lib/server/patients';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async () => {
	const patients = await listPublicPatients({ inCareOnly: true, limit: 3 });
	return {
		patients: patients.map((p) => ({
			slug: p.slug,
			name: p.name,
			species: p.species,
			status: p.status,
			admittedOn: p.admittedOn,
			summary: p.summary,
			heroImage: p.heroImage,
			heroAlt: p.heroAlt
		}))
	};
};
