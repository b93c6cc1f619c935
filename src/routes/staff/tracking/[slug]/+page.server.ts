import { error, fail } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { parseForm } from '$lib/server/forms';
import {
	deskDetail,
	deskPatient,
	recomputeNow,
	saveTrackingSettings,
	setTransmitter
} from '$lib/server/journeys/desk';
import { staffTrack } from '$lib/server/journeys/exports';
import { staffMapData } from '$lib/server/journeys/staff-map';
import { DEFAULT_MAX_SPEED_MS } from '$lib/server/tracking/clean';
import { STAFF_AREAS } from '$lib/staff-areas';
import { settingsForm, transmitterForm } from './forms';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.tracking.roles;

async function patientOr404(slug: string) {
	const patient = await deskPatient(slug);
	if (!patient) error(404, 'No patient here.');
	return patient;
}

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const patient = await patientOr404(event.params.slug);
	const detail = await deskDetail(patient.id);
	const track = await staffTrack(db(), patient.id);
	return {
		patient,
		...detail,
		defaultMaxSpeedMs: DEFAULT_MAX_SPEED_MS,
		map: staffMapData(track, detail.journey?.geojson ?? null)
	};
};

export const actions: Actions = {
	settings: async (event) => {
		const user = requireRoles(event, ...area);
		const patient = await patientOr404(event.params.slug);
		const parsed = parseForm(settingsForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'settings', errors: parsed.errors, values: parsed.values });
		}
		const result = await saveTrackingSettings(patient.id, parsed.data, user.id);
		return {
			form: 'settings',
			saved: `Settings saved; ${result.kept} of ${result.raw} fixes kept.`
		};
	},
	transmitter: async (event) => {
		const user = requireRoles(event, ...area);
		const patient = await patientOr404(event.params.slug);
		const parsed = parseForm(transmitterForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, { form: 'transmitter', errors: parsed.errors, values: parsed.values });
		}
		await setTransmitter(patient.id, parsed.data.transmitterId, user.id);
		return { form: 'transmitter', saved: 'Transmitter saved.' };
	},
	recompute: async (event) => {
		requireRoles(event, ...area);
		const patient = await patientOr404(event.params.slug);
		const result = await recomputeNow(patient.id);
		return {
			form: 'recompute',
			saved: `Computed again: ${result.kept} of ${result.raw} fixes kept.`
		};
	}
};
