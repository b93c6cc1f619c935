// CSV injection: every CSV export of the app, filled with text that a spreadsheet would run as a
// formula. OWASP "CSV Injection" (https://owasp.org/www-community/attacks/CSV_Injection): a cell
// must not begin with = + - @, tab or carriage return. Text typed by people gets a leading
// apostrophe (src/lib/server/ledger/csv.ts, the one cell writer of every export). Numbers the app
// writes itself stay numbers, a minus sign included (refunds in cents, western longitudes): the
// decision is that "-1250" in an amount column is the number it says, not a formula.
import { parse } from 'csv-parse/sync';
import { eq } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	adoptionLevels,
	adoptions,
	gifts,
	journeys,
	organisationSettings,
	patients,
	payoutLines,
	payouts,
	positions,
	users
} from '$lib/server/db/schema';
import { GET as closeCsv } from '../../../src/routes/api/ledger/close.csv/+server';
import { GET as giftsCsv } from '../../../src/routes/api/ledger/gifts.csv/+server';
import { GET as payoutsCsv } from '../../../src/routes/api/ledger/payouts.csv/+server';
import { GET as occurrencesCsv } from '../../../src/routes/api/patients/[slug]/occurrences.csv/+server';
import { GET as trackCsv } from '../../../src/routes/api/tracking/[slug]/[which]/+server';
import { useTestDatabase } from '../../setup/test-db';
import { people } from '../newsroom-helpers';
import { publicEvent } from '../public-event';
import { CaseCounter, expectHealthy, hostileCase, trackRowCounts } from './harness';
import { CSV_INJECTION } from './payloads';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);
const counter = new CaseCounter();
let staff: SessionUser;
const YEAR = new Date().getUTCFullYear();
const SLUG = 'hostile-csv';
const formulas = CSV_INJECTION.map((p) => p.value);
/** A value with each dangerous first character, for each text column. */
const hostile = (i: number) => formulas[i % formulas.length];

beforeAll(async () => {
	staff = await person(['development', 'tracker']);
	await db()
		.insert(organisationSettings)
		.values({ displayName: '=HYPERLINK("https://example.invalid","Hospital")', legalName: 'L' });
	const reconciler = await person(['development']);
	const patientId = crypto.randomUUID();
	await db().insert(patients).values({
		id: patientId,
		slug: SLUG,
		name: "@SUM(1+1)*cmd|' /C calc'!A0",
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'released',
		transmitterId: '-cmd'
	});
	const levelIds = formulas.map(() => crypto.randomUUID());
	await db()
		.insert(adoptionLevels)
		.values(
			formulas.map((name, i) => ({
				id: levelIds[i],
				slug: `hostile-${i}`,
				name,
				amountCents: 2500,
				interval: 'once' as const
			}))
		);
	const paidAt = new Date(Date.UTC(YEAR, 0, 15, 12));
	for (const [i, levelId] of levelIds.entries()) {
		const adoptionId = crypto.randomUUID();
		await db()
			.insert(adoptions)
			.values({
				id: adoptionId,
				patientId,
				levelId,
				kind: 'self',
				status: 'active',
				interval: 'once',
				amountCents: 2500,
				currency: 'usd',
				supporterEmail: `a${i}@example.test`,
				supporterName: hostile(i + 1)
			});
		await db()
			.insert(gifts)
			.values({
				id: `gift-${i}`,
				adoptionId,
				status: 'refunded',
				amountCents: 2500,
				refundedCents: 2500,
				feeCents: 103,
				netCents: 2397,
				currency: 'usd',
				chargeId: `${hostile(i + 2)}ch${i}`,
				invoiceId: hostile(i + 3) + i,
				payoutId: hostile(i + 4),
				paidAt
			});
	}
	// gifts recorded by hand: the donor's name and the cheque reference are typed by people
	await db()
		.insert(gifts)
		.values(
			formulas.map((value, i) => ({
				id: `manual-${i}`,
				source: 'manual' as const,
				method: 'cheque' as const,
				reference: value,
				donorName: hostile(i + 1),
				donorEmail: `d${i}@example.test`,
				status: 'paid' as const,
				amountCents: 5000,
				currency: 'usd',
				paidAt
			}))
		);
	await db().insert(payouts).values({
		id: '=po_1',
		status: 'paid',
		amountCents: -1250,
		currency: 'usd',
		arrivalDate: paidAt,
		reconciledBy: reconciler.id,
		reconciledAt: paidAt
	});
	await db().update(users).set({ name: "+1+cmd|' /C calc'!A0" }).where(eq(users.id, reconciler.id));
	await db()
		.insert(payoutLines)
		.values(
			formulas.map((value, i) => ({
				id: `${value}${i}`,
				payoutId: '=po_1',
				type: hostile(i + 1),
				reportingCategory: hostile(i + 2),
				amountCents: -1250,
				feeCents: 0,
				netCents: -1250,
				currency: 'usd',
				sourceId: hostile(i + 3),
				chargeId: hostile(i + 4),
				createdAt: paidAt
			}))
		);
	// the public projection and the raw track, with a western longitude (a negative number)
	await db()
		.insert(journeys)
		.values({
			patientId,
			etag: '"x"',
			cutoffDate: '2026-05-01',
			geojson: {
				type: 'FeatureCollection',
				properties: {
					distanceKm: 12,
					distanceMi: 7,
					cellDeg: 0.1,
					delayDays: 7,
					cutoffDate: '2026-05-01',
					lastPublicDate: '2026-04-02'
				},
				features: [
					{
						type: 'Feature',
						geometry: { type: 'Point', coordinates: [-70.05, 30.05] },
						properties: { kind: 'cell', firstDate: '2026-04-01', lastDate: '2026-04-02' }
					}
				]
			}
		});
	await db()
		.insert(positions)
		.values(
			formulas.map((value, i) => ({
				patientId,
				transmitterId: '-cmd',
				observedAt: new Date(Date.UTC(2026, 3, 1, i)),
				latitude: 30.01234,
				longitude: -70.04321,
				locationClass: 'G' as const,
				status: 'rejected' as const,
				rejectReason: 'speed',
				rejectDetail: value
			}))
		);
	await trackRowCounts(db());
});

/** Cells a spreadsheet would run: first character = + - @ tab or CR (OWASP). */
const DANGEROUS = /^[=+\-@\t\r]/;
const NUMBER = /^-?\d+(\.\d+)?(e-?\d+)?$/;

/**
 * Every data cell of `csv` that begins like a formula, except numbers in the columns that hold
 * numbers the app wrote itself.
 */
function formulaCells(csv: string, numericColumns: readonly string[]): string[] {
	const [header, ...records] = parse(csv, { bom: true }) as string[][];
	const numeric = new Set(numericColumns.map((name) => header.indexOf(name)));
	expect(numeric.has(-1), 'every numeric column is in the header').toBe(false);
	const found: string[] = [];
	for (const record of records) {
		expect(record).toHaveLength(header.length);
		record.forEach((cell, i) => {
			if (!DANGEROUS.test(cell)) return;
			if (numeric.has(i) && NUMBER.test(cell)) return;
			found.push(`${header[i]}: ${JSON.stringify(cell)}`);
		});
	}
	return found;
}

function staffGet(
	handler: (event: never) => unknown,
	path: string,
	params: Record<string, string> = {}
) {
	const event = publicEvent(path, params) as unknown as object;
	return handler({ ...event, locals: { user: staff, session: null, requestId: 'test' } } as never);
}

interface ExportCase {
	name: string;
	fetch: () => unknown;
	numeric: string[];
	/** hostile texts that must appear, neutralised with a leading apostrophe */
	expectNeutralised: string[];
	/** a negative number the app wrote, which must stay a number */
	expectNumber?: string;
}

const exportCases: ExportCase[] = [
	{
		name: 'GET /api/ledger/gifts.csv',
		fetch: () => staffGet(giftsCsv, '/api/ledger/gifts.csv'),
		numeric: [
			'amount_cents',
			'fee_cents',
			'net_cents',
			'refunded_cents',
			'fair_market_value_cents'
		],
		expectNeutralised: formulas
	},
	{
		name: 'GET /api/ledger/payouts.csv',
		fetch: () => staffGet(payoutsCsv, '/api/ledger/payouts.csv'),
		numeric: ['payout_amount_cents', 'amount_cents', 'fee_cents', 'net_cents'],
		expectNeutralised: [...formulas, '=po_1', "+1+cmd|' /C calc'!A0"],
		expectNumber: '-1250'
	},
	{
		name: 'GET /api/ledger/close.csv',
		fetch: () => staffGet(closeCsv, `/api/ledger/close.csv?year=${YEAR}`),
		numeric: ['gifts', 'gross_cents', 'refunds_cents', 'disputes_cents', 'fees_cents', 'net_cents'],
		expectNeutralised: formulas
	},
	{
		name: 'GET /api/patients/[slug]/occurrences.csv (public)',
		fetch: () =>
			occurrencesCsv(publicEvent(`/api/patients/${SLUG}/occurrences.csv`, { slug: SLUG })),
		numeric: ['decimalLatitude', 'decimalLongitude', 'coordinateUncertaintyInMeters'],
		expectNeutralised: [
			"@SUM(1+1)*cmd|' /C calc'!A0",
			'=HYPERLINK("https://example.invalid","Hospital")'
		],
		expectNumber: '-70.05'
	},
	...(['raw', 'cleaned'] as const).map((which) => ({
		name: `GET /api/tracking/[slug]/${which}?format=csv (staff)`,
		fetch: () =>
			staffGet(trackCsv, `/api/tracking/${SLUG}/${which}?format=csv`, { slug: SLUG, which }),
		numeric: [
			'latitude',
			'longitude',
			'semi_major_m',
			'semi_minor_m',
			'orientation_deg',
			'error_radius_m'
		],
		expectNeutralised: which === 'raw' ? [...formulas, '-cmd'] : [],
		expectNumber: which === 'raw' ? '-70.04321' : undefined
	}))
];

describe('every CSV export neutralises formulas', () => {
	for (const c of exportCases) {
		it(c.name, async () => {
			const outcome = await hostileCase(db, counter, c.fetch);
			const response = (outcome as { response: Response }).response;
			expect(response.headers.get('content-type')).toMatch(/^text\/csv/);
			const csv = await response.text();
			expect(formulaCells(csv, c.numeric)).toEqual([]);
			const cells = (parse(csv, { bom: true }) as string[][]).flat();
			for (const value of c.expectNeutralised) {
				expect(cells, `${JSON.stringify(value)} is exported as text`).toContain(`'${value}`);
			}
			if (c.expectNumber) expect(cells).toContain(c.expectNumber);
		});
	}
});

describe('after the batch', () => {
	it('/healthz still answers 200', expectHealthy);
	it('checked every export', () => {
		counter.report('exports');
		expect(counter.total).toBe(exportCases.length);
	});
});
