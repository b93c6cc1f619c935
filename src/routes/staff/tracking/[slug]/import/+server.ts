import { json } from '@sveltejs/kit';
import { Readable } from 'node:stream';
import type { ReadableStream as NodeReadableStream } from 'node:stream/web';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { audit } from '$lib/server/audit';
import { db } from '$lib/server/db';
import { LOCATION_CLASS_VALUES } from '$lib/server/db/schema';
import { deskPatient } from '$lib/server/journeys/desk';
import { importPositions } from '$lib/server/journeys/import';
import {
	ImportFileError,
	parsePositions,
	validateMapping,
	type CsvMapping
} from '$lib/server/tracking/import';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/** Largest file the desk accepts (the issue's 50 MB, plus room). */
const MAX_IMPORT_BYTES = 64 * 1024 * 1024;

const query = z.object({
	format: z.enum(['csv', 'geojson', 'gpx'], {
		error: 'Choose the file type: CSV, GeoJSON or GPX.'
	}),
	policy: z.enum(['refuse_file', 'skip_bad_rows'], {
		error: 'Choose what to do with bad rows.'
	}),
	fileName: z
		.string()
		.trim()
		.min(1, 'The file has no name.')
		.max(255, 'The file name is too long.'),
	transmitterId: z
		.string()
		.trim()
		.min(1, 'Enter the transmitter ID these positions come from.')
		.max(64, 'Keep the transmitter ID under 64 characters.')
		.regex(/^[A-Za-z0-9._:-]+$/, 'Use letters, digits, dots, dashes, colons or underscores.'),
	defaultClass: z.enum(LOCATION_CLASS_VALUES).optional(),
	mapping: z.string().optional()
});

function refuse(status: number, error: string, field?: string) {
	return json({ error, ...(field ? { field } : {}) }, { status });
}

/**
 * Imports one file of positions, streamed from the request body (the raw file, not a form), so a
 * 50 MB file never sits whole in memory. Answers with the import report as JSON.
 */
export const POST: RequestHandler = async (event) => {
	const user = requireRoles(event, ...STAFF_AREAS.tracking.roles);
	// Not a form post, so SvelteKit's CSRF check does not apply: check the origin ourselves.
	if (event.request.headers.get('origin') !== event.url.origin) {
		return refuse(403, 'Cross-site requests are refused.');
	}
	const patient = await deskPatient(event.params.slug);
	if (!patient) return refuse(404, 'No patient here.');
	const declared = Number(event.request.headers.get('content-length') ?? NaN);
	if (declared > MAX_IMPORT_BYTES) {
		return refuse(413, `Files can be at most ${MAX_IMPORT_BYTES / (1024 * 1024)} MB.`, 'file');
	}
	const parsed = query.safeParse(Object.fromEntries(event.url.searchParams));
	if (!parsed.success) {
		const issue = parsed.error.issues[0];
		return refuse(400, issue.message, String(issue.path[0] ?? 'form'));
	}
	const { format, policy, fileName, transmitterId, defaultClass } = parsed.data;
	let mapping: CsvMapping | undefined;
	if (format === 'csv') {
		let wanted: Partial<CsvMapping>;
		try {
			wanted = JSON.parse(parsed.data.mapping ?? '{}');
		} catch {
			return refuse(
				400,
				'The column mapping could not be read; choose the columns again.',
				'mapping'
			);
		}
		const headers = Object.values(wanted).filter((v): v is string => typeof v === 'string');
		const checked = validateMapping(headers, wanted, defaultClass);
		if (!checked.ok) {
			return refuse(400, Object.values(checked.errors).join(' '), 'mapping');
		}
		mapping = checked.mapping;
	}
	if (!event.request.body) return refuse(400, 'Choose a file to upload.', 'file');

	const source = Readable.fromWeb(event.request.body as unknown as NodeReadableStream<Uint8Array>);
	try {
		const report = await importPositions(
			parsePositions(source, { format, mapping, defaultClass, now: Date.now() }),
			{ patientId: patient.id, transmitterId, fileName, format, policy, userId: user.id }
		);
		if (report.stored) {
			await audit(db(), user.id, 'tracking.positions_imported', patient.id, {
				importId: report.importId,
				fileName,
				rowsAdded: report.rowsAdded,
				rowsRefused: report.rowsRefused
			});
		}
		return json(report, { status: report.stored ? 200 : 422 });
	} catch (error) {
		if (error instanceof ImportFileError) return refuse(400, error.message, 'file');
		throw error;
	} finally {
		source.destroy();
	}
};
