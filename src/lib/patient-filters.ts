// The patients page's filters, shared by the server (first render) and the browser (live
// filtering) so that both write the same query string and a shared link reproduces the view.
import type { PatientStatus, Species } from '$lib/server/db/schema';

export const MAX_NAME_SEARCH = 60;

export interface PatientFilters {
	species?: Species;
	status?: PatientStatus;
	/** Part of a name, trimmed. */
	q?: string;
}

/** The query string for a set of filters, with empty ones left out, in a fixed order. */
export function patientFilterParams(filters: PatientFilters): URLSearchParams {
	const params = new URLSearchParams();
	if (filters.species) params.set('species', filters.species);
	if (filters.status) params.set('status', filters.status);
	const q = filters.q?.trim();
	if (q) params.set('q', q);
	return params;
}

export function hasFilters(filters: PatientFilters): boolean {
	return patientFilterParams(filters).size > 0;
}
