import { error } from '@sveltejs/kit';
import { getPublicPatient } from '$lib/server/patients';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async ({ params }) => {
	const patient = await getPublicPatient(params.slug);
	if (!patient) error(404, 'Not found.');
	const memorial = patient.publicTreatment === 'memorial';
	return {
		patient: {
			slug: patient.slug,
			name: patient.name,
			species: patient.species,
			lifeStage: patient.lifeStage,
			carapaceLengthCm: patient.carapaceLengthCm,
			weightKg: patient.weightKg,
			admittedOn: patient.admittedOn,
			admissionReason: patient.admissionReason,
			status: patient.status,
			summary: patient.summary,
			heroImage: patient.heroImage,
			heroAlt: patient.heroAlt,
			memorial,
			memorialNote: memorial ? patient.memorialNote : null
		}
	};
};
