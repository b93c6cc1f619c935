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
import { cleanFileName } from '$lib/server/file-names';
import {
	ImportFileError,
	parsePositions,
	validateMapping,
	type CsvMapping,
	type MappingField
} from '$lib/server/tracking/import';
import { MAPPING_FIELDS } from '$lib/server/tracking/import/mapping';
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
	// Only a label for staff: kept as its last path part, without control characters.
	fileName: z
		.string()
		.max(255, 'The file name is too long.')
		.transform(cleanFileName)
		.pipe(z.string().min(1, 'The file has no name.')),
	transmitterId: z
		.string()
		.trim()
		.min(1, 'Enter the transmitter ID these positions come from.')
		.max(64, 'Keep the transmitter ID under 64 characters.')
		.regex(/^[A-Za-z0-9._:-]+$/, 'Use letters, digits, dots, dashes, colons or underscores.'),
	defaultClass: z.enum(LOCATION_CLASS_VALUES).optional(),
	mapping: z
		.string()
		.max(64 * 1024, 'The column mapping is too long.')
		.optional()
});

/** The column chosen for each field, as the mapping step sends it: names (strings) only. */
const mappingJson = z.partialRecord(
	z.enum(MAPPING_FIELDS as [MappingField, ...MappingField[]]),
	z.string().max(1000, 'A column name is at most 1,000 characters.')
);

function refuse(status: number, error: string, field?: string) {
	return json({ error, ...(field ? { field } : {}) }, { status });
}

const TOO_LARGE = `Files can be at most ${MAX_IMPORT_BYTES / (1024 * 1024)} MB.`;

/** Why the upload could not be read to its end: too large, or cut off. */
class BodyUnreadable extends Error {
	constructor(
		readonly status: 400 | 413,
		message: string
	) {
		super(message);
	}
}

/**
 * The request body, stopped past MAX_IMPORT_BYTES whether or not a Content-Length was declared
 * (a chunked upload has none). A body the server stops reading (its own size limit) or the
 * client cuts off becomes a `BodyUnreadable`, answered with a 4xx rather than a 500.
 */
function limitedBody(body: ReadableStream<Uint8Array>): ReadableStream<Uint8Array> {
	const reader = body.getReader();
	let total = 0;
	return new ReadableStream<Uint8Array>({
		async pull(controller) {
			let next: ReadableStreamReadResult<Uint8Array>;
			try {
				next = await reader.read();
			} catch (error) {
				const tooLarge = (error as { status?: unknown } | null)?.status === 413;
				controller.error(
					tooLarge
						? new BodyUnreadable(413, TOO_LARGE)
						: new BodyUnreadable(400, 'The upload was cut off; send the file again.')
				);
				return;
			}
			if (next.done) return controller.close();
			total += next.value.byteLength;
			if (total > MAX_IMPORT_BYTES) {
				controller.error(new BodyUnreadable(413, TOO_LARGE));
				await reader.cancel().catch(() => {});
				return;
			}
			controller.enqueue(next.value);
		},
		cancel: (reason) => reader.cancel(reason)
	});
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
	if (declared > MAX_IMPORT_BYTES) return refuse(413, TOO_LARGE, 'file');
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
			wanted = mappingJson.parse(JSON.parse(parsed.data.mapping ?? '{}'));
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

	const source = Readable.fromWeb(
		limitedBody(event.request.body) as unknown as NodeReadableStream<Uint8Array>
	);
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
		if (error instanceof BodyUnreadable) return refuse(error.status, error.message, 'file');
		throw error;
	} finally {
		source.destroy();
	}
};
