import { json } from '@sveltejs/kit';
import { Readable } from 'node:stream';
import { requireRoles } from '$lib/server/auth/roles';
import { deskPatient } from '$lib/server/journeys/desk';
import { ImportFileError, previewCsv } from '$lib/server/tracking/import';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/** The browser sends the start of the file; the preview needs no more. */
const PREVIEW_BYTES = 64 * 1024;

/** The first rows of a CSV file and a suggested column mapping, for the mapping step. */
export const POST: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.tracking.roles);
	if (event.request.headers.get('origin') !== event.url.origin) {
		return json({ error: 'Cross-site requests are refused.' }, { status: 403 });
	}
	const patient = await deskPatient(event.params.slug);
	if (!patient) return json({ error: 'No patient here.' }, { status: 404 });
	const bytes = new Uint8Array(await event.request.arrayBuffer());
	if (bytes.byteLength > PREVIEW_BYTES + 1024) {
		return json({ error: 'Send only the start of the file for the preview.' }, { status: 413 });
	}
	try {
		const preview = await previewCsv(Readable.from([Buffer.from(bytes)]));
		return json(preview);
	} catch (error) {
		if (error instanceof ImportFileError) return json({ error: error.message }, { status: 400 });
		throw error;
	}
};
