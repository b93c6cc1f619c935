import { json } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { jsonError } from '$lib/server/http';
import { deskPatient } from '$lib/server/journeys/desk';
import { staffTrack, staffTrackCsv, staffTrackGeoJSON } from '$lib/server/journeys/exports';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/**
 * Staff export of a patient's raw track (every fix, with its verdict) or cleaned track (kept
 * fixes), as GeoJSON (default) or CSV with `?format=csv`. Exact positions: tracker role only,
 * never cached by shared caches.
 */
export const GET: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.tracking.roles);
	const which = event.params.which;
	if (which !== 'raw' && which !== 'cleaned') {
		return jsonError(404, 'Ask for the raw or the cleaned track.');
	}
	const format = event.url.searchParams.get('format') ?? 'geojson';
	if (format !== 'csv' && format !== 'geojson') {
		return jsonError(400, 'The format must be csv or geojson.');
	}
	const patient = await deskPatient(event.params.slug);
	if (!patient) return jsonError(404, 'No patient here.');
	const rows = await staffTrack(db(), patient.id);
	const headers = {
		'cache-control': 'private, no-store',
		'content-disposition': `attachment; filename="${patient.slug}-${which}.${format === 'csv' ? 'csv' : 'geojson'}"`
	};
	if (format === 'csv') {
		return new Response(staffTrackCsv(rows, which), {
			headers: { ...headers, 'content-type': 'text/csv; charset=utf-8' }
		});
	}
	return json(staffTrackGeoJSON(rows, which), {
		headers: { ...headers, 'content-type': 'application/geo+json; charset=utf-8' }
	});
};
