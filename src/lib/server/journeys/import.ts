// One upload is one transaction: the rows, the import record, the cleaning verdicts and the
// public projection are committed together, or nothing is.
import { eq, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { db, type Executor } from '../db';
import { patients, positionImports, positions } from '../db/schema';
import type { ImportFormat, ParseItem, RowProblem } from '../tracking/import';
import { recomputeJourney, type RecomputeResult } from './recompute';

/** What to do with a file that has bad rows. */
export type BadRowPolicy = 'refuse_file' | 'skip_bad_rows';

export interface ImportRequest {
	patientId: string;
	transmitterId: string;
	fileName: string;
	format: ImportFormat;
	policy: BadRowPolicy;
	userId: string | null;
	now?: number;
}

/** How many problems an import keeps for the report; the count covers them all. */
export const PROBLEMS_KEPT = 1000;
const BATCH = 5000;

export interface ImportReport {
	/** false: the file was refused as a whole and nothing was stored */
	stored: boolean;
	importId: string | null;
	rowsRead: number;
	rowsAdded: number;
	rowsAlreadyStored: number;
	rowsRefused: number;
	problems: RowProblem[];
	recompute: RecomputeResult | null;
}

class RefuseFile extends Error {}

type PositionRow = typeof positions.$inferInsert;

/**
 * Reads `items` (from the streaming parsers) inside one transaction. With `refuse_file`, one bad
 * row rolls everything back and the report lists the bad rows; with `skip_bad_rows` the good rows
 * are stored and the bad ones listed. The same fix sent again is not stored twice.
 */
export async function importPositions(
	items: AsyncIterable<ParseItem>,
	request: ImportRequest,
	executor: Executor = db()
): Promise<ImportReport> {
	const report: ImportReport = {
		stored: false,
		importId: null,
		rowsRead: 0,
		rowsAdded: 0,
		rowsAlreadyStored: 0,
		rowsRefused: 0,
		problems: [],
		recompute: null
	};
	const importId = randomUUID();
	try {
		await executor.transaction(async (tx) => {
			const [patient] = await tx
				.select({ id: patients.id })
				.from(patients)
				.where(eq(patients.id, request.patientId))
				.for('update');
			if (!patient) throw new Error(`No patient ${request.patientId}`);
			// The import row first, so positions can point at it; its figures are filled in last.
			await tx.insert(positionImports).values({
				id: importId,
				patientId: request.patientId,
				transmitterId: request.transmitterId,
				fileName: request.fileName,
				format: request.format,
				rowsRead: 0,
				rowsAdded: 0,
				rowsAlreadyStored: 0,
				rowsRefused: 0,
				uploadedBy: request.userId
			});

			let batch: PositionRow[] = [];
			// One statement per batch with one array per column (unnest), rather than a VALUES
			// list with a parameter per cell: several times faster on PGlite and PostgreSQL alike.
			const flush = async () => {
				if (!batch.length) return;
				const column = <T>(pick: (row: PositionRow) => T) => sql.param(batch.map(pick));
				const result = await tx.execute(sql`
					INSERT INTO ${positions} (patient_id, transmitter_id, observed_at, latitude, longitude,
						location_class, semi_major_m, semi_minor_m, orientation_deg, error_radius_m, import_id)
					SELECT * FROM unnest(
						${column((r) => r.patientId)}::text[],
						${column((r) => r.transmitterId)}::text[],
						${column((r) => (r.observedAt as Date).toISOString())}::timestamptz[],
						${column((r) => r.latitude)}::float8[],
						${column((r) => r.longitude)}::float8[],
						${column((r) => r.locationClass)}::text[],
						${column((r) => r.semiMajorM ?? null)}::real[],
						${column((r) => r.semiMinorM ?? null)}::real[],
						${column((r) => r.orientationDeg ?? null)}::real[],
						${column((r) => r.errorRadiusM ?? null)}::real[],
						${column((r) => r.importId ?? null)}::text[])
					ON CONFLICT DO NOTHING
					RETURNING 1`);
				const added = (result as unknown as { rows: unknown[] }).rows.length;
				report.rowsAdded += added;
				report.rowsAlreadyStored += batch.length - added;
				batch = [];
			};

			for await (const item of items) {
				report.rowsRead++;
				if (!item.ok) {
					report.rowsRefused++;
					for (const problem of item.problems) {
						if (report.problems.length < PROBLEMS_KEPT) report.problems.push(problem);
					}
					continue;
				}
				if (report.rowsRefused > 0 && request.policy === 'refuse_file') continue;
				const p = item.position;
				batch.push({
					patientId: request.patientId,
					transmitterId: request.transmitterId,
					observedAt: new Date(p.time),
					latitude: p.lat,
					longitude: p.lon,
					locationClass: p.lc,
					semiMajorM: p.semiMajorM,
					semiMinorM: p.semiMinorM,
					orientationDeg: p.orientationDeg,
					errorRadiusM: p.errorRadiusM,
					importId
				});
				if (batch.length >= BATCH) await flush();
			}
			if (report.rowsRefused > 0 && request.policy === 'refuse_file') throw new RefuseFile();
			await flush();
			await tx
				.update(positionImports)
				.set({
					rowsRead: report.rowsRead,
					rowsAdded: report.rowsAdded,
					rowsAlreadyStored: report.rowsAlreadyStored,
					rowsRefused: report.rowsRefused,
					problems: report.problems
				})
				.where(eq(positionImports.id, importId));
			report.recompute = await recomputeJourney(tx, request.patientId, request.now);
		});
	} catch (error) {
		if (!(error instanceof RefuseFile)) throw error;
		report.rowsAdded = 0;
		report.rowsAlreadyStored = 0;
		return report;
	}
	report.stored = true;
	report.importId = importId;
	return report;
}
