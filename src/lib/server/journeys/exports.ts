// Downloads. The public ones (GeoJSON, Darwin Core CSV) are built from the stored public
// projection only; the staff ones read the raw positions and their cleaning verdicts.
import { asc, eq } from 'drizzle-orm';
import { SPECIES_LABELS } from '$lib/patients';
import type { Executor } from '../db';
import { csvRow, type CsvValue } from '../ledger/csv';
import { positions } from '../db/schema';
import type { PublicPatient } from '../patients';
import type { JourneyGeoJSON, JourneyPointFeature } from '../tracking/projection';
import { coordinateUncertaintyInMeters, dataGeneralizations } from '../tracking/uncertainty';

/**
 * One CSV record: the shared cells of the Ledger's exports (RFC 4180 quoting, and the OWASP
 * formula guard on text: a patient's name or a transmitter id like "-cmd" is typed by staff),
 * with numbers that may have fractions (coordinates, metres).
 */
const csvLine = (values: CsvValue[]) => csvRow(values, { fractions: true });

/** Darwin Core occurrence terms we fill, in column order (https://dwc.tdwg.org/terms/). */
export const DARWIN_CORE_COLUMNS = [
	'occurrenceID',
	'basisOfRecord',
	'occurrenceStatus',
	'organismID',
	'organismName',
	'scientificName',
	'vernacularName',
	'eventDate',
	'decimalLatitude',
	'decimalLongitude',
	'geodeticDatum',
	'coordinateUncertaintyInMeters',
	'dataGeneralizations',
	'informationWithheld',
	'institutionCode'
] as const;

type PublicPatientForExport = Pick<PublicPatient, 'slug' | 'name' | 'species'>;

/**
 * A Darwin Core occurrence CSV: one row per public cell visit, with the generalisation recorded
 * as the standard asks. `eventDate` is an ISO 8601 date or date interval (first/last day in the
 * cell).
 */
export function darwinCoreCsv(
	patient: PublicPatientForExport,
	journey: JourneyGeoJSON,
	institution: string
): string {
	const { cellDeg, delayDays } = journey.properties;
	const generalisations = dataGeneralizations(cellDeg, delayDays);
	const cells = journey.features.filter(
		(f): f is JourneyPointFeature => f.properties.kind === 'cell'
	);
	let csv = csvLine([...DARWIN_CORE_COLUMNS]);
	cells.forEach((cell, index) => {
		const [lon, lat] = cell.geometry.coordinates;
		const { firstDate, lastDate } = cell.properties;
		csv += csvLine([
			`tideward:${patient.slug}:${index + 1}`,
			'MachineObservation',
			'present',
			`tideward:${patient.slug}`,
			patient.name,
			SPECIES_LABELS[patient.species].scientific,
			SPECIES_LABELS[patient.species].common,
			firstDate === lastDate ? firstDate : `${firstDate}/${lastDate}`,
			lat,
			lon,
			'EPSG:4326',
			coordinateUncertaintyInMeters(lat, cellDeg),
			generalisations,
			'Exact positions, times of day and the most recent positions are withheld to protect the animal.',
			institution
		]);
	});
	return csv;
}

export interface StaffTrackRow {
	id: number;
	transmitterId: string;
	observedAt: Date;
	latitude: number;
	longitude: number;
	locationClass: string;
	semiMajorM: number | null;
	semiMinorM: number | null;
	orientationDeg: number | null;
	errorRadiusM: number | null;
	status: string;
	rejectReason: string | null;
	rejectDetail: string | null;
}

/** Every stored position of a patient with its verdict, oldest first (staff only). */
export async function staffTrack(tx: Executor, patientId: string): Promise<StaffTrackRow[]> {
	return tx
		.select({
			id: positions.id,
			transmitterId: positions.transmitterId,
			observedAt: positions.observedAt,
			latitude: positions.latitude,
			longitude: positions.longitude,
			locationClass: positions.locationClass,
			semiMajorM: positions.semiMajorM,
			semiMinorM: positions.semiMinorM,
			orientationDeg: positions.orientationDeg,
			errorRadiusM: positions.errorRadiusM,
			status: positions.status,
			rejectReason: positions.rejectReason,
			rejectDetail: positions.rejectDetail
		})
		.from(positions)
		.where(eq(positions.patientId, patientId))
		.orderBy(asc(positions.observedAt), asc(positions.id));
}

export const STAFF_CSV_COLUMNS = [
	'transmitter_id',
	'timestamp_utc',
	'latitude',
	'longitude',
	'location_class',
	'semi_major_m',
	'semi_minor_m',
	'orientation_deg',
	'error_radius_m',
	'status',
	'reject_reason',
	'reject_detail'
] as const;

/** The raw track (every fix) or the cleaned one (kept fixes) as CSV, full precision. */
export function staffTrackCsv(rows: readonly StaffTrackRow[], which: 'raw' | 'cleaned'): string {
	let csv = csvLine([...STAFF_CSV_COLUMNS]);
	for (const r of rows) {
		if (which === 'cleaned' && r.status !== 'kept') continue;
		csv += csvLine([
			r.transmitterId,
			r.observedAt.toISOString(),
			r.latitude,
			r.longitude,
			r.locationClass,
			r.semiMajorM,
			r.semiMinorM,
			r.orientationDeg,
			r.errorRadiusM,
			r.status,
			r.rejectReason,
			r.rejectDetail
		]);
	}
	return csv;
}

/** The raw or cleaned track as GeoJSON points with every attribute (staff only). */
export function staffTrackGeoJSON(rows: readonly StaffTrackRow[], which: 'raw' | 'cleaned') {
	return {
		type: 'FeatureCollection' as const,
		features: rows
			.filter((r) => which === 'raw' || r.status === 'kept')
			.map((r) => ({
				type: 'Feature' as const,
				geometry: { type: 'Point' as const, coordinates: [r.longitude, r.latitude] },
				properties: {
					transmitterId: r.transmitterId,
					time: r.observedAt.toISOString(),
					locationClass: r.locationClass,
					semiMajorM: r.semiMajorM,
					semiMinorM: r.semiMinorM,
					orientationDeg: r.orientationDeg,
					errorRadiusM: r.errorRadiusM,
					status: r.status,
					rejectReason: r.rejectReason,
					rejectDetail: r.rejectDetail
				}
			}))
	};
}
