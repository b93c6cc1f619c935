// The Ledger's payout pages, the payout CSV and the monthly close, with gifts paid and paid out
// through the official SDK against the local fake processor (as in reconciliation.test.ts).
import { isActionFailure, isHttpError, isRedirect } from '@sveltejs/kit';
import { parse } from 'csv-parse/sync';
import { asc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Role } from '$lib/roles';
import { startCheckout } from '$lib/server/adoptions/checkout';
import {
	adoptionLevels,
	gifts,
	patients,
	payoutLines,
	payouts,
	reconciliationNotes,
	users
} from '$lib/server/db/schema';
import {
	closeCsv,
	MANUAL_GIFTS,
	monthlyClose,
	parseCloseYear,
	payoutLinesInBatches,
	type CloseFigures
} from '$lib/server/ledger/close';
import { stripe } from '$lib/server/payments/client';
import {
	advanceClock,
	closeDispute,
	createPayout,
	openDispute,
	payCheckoutSession,
	refund,
	type FakeStripe
} from '$lib/server/payments/fake';
import { GET as closeCsvGet } from '../../src/routes/api/ledger/close.csv/+server';
import { GET as payoutsCsvGet } from '../../src/routes/api/ledger/payouts.csv/+server';
import { load as closeLoad } from '../../src/routes/staff/ledger/close/+page.server';
import { load as listLoad } from '../../src/routes/staff/ledger/payouts/+page.server';
import {
	actions as payoutActions,
	load as payoutLoad
} from '../../src/routes/staff/ledger/payouts/[id]/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

const ORIGIN = 'http://127.0.0.1:5173';
const PATIENT = crypto.randomUUID();
const LEVEL = crypto.randomUUID();
const CLOSE_LEVEL = crypto.randomUUID();
const DISPUTE_LEVEL = crypto.randomUUID();

// The exact header accounting relies on; written out, not imported.
const PAYOUT_HEADER =
	'payout_id,payout_status,payout_amount_cents,arrival_date,reconciled_at,reconciled_by,' +
	'line_id,line_type,reporting_category,amount_cents,fee_cents,net_cents,currency,source_id,' +
	'charge_id,gift_id';
const CLOSE_HEADER =
	'month,level,gifts,gross_cents,refunds_cents,disputes_cents,fees_cents,net_cents';

let processor: TestProcessor;
let fake: FakeStripe;
let dev: SessionUser;
let admin: SessionUser;
let supporter: SessionUser;
let educator: SessionUser;

async function person(name: string, roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${name.toLowerCase()}-${id.slice(0, 6)}@example.test`;
	await db().insert(users).values({ id, email, name, emailVerified: true });
	return { id, email, name, roles };
}

function event(
	path: string,
	user: SessionUser | null,
	options: { form?: Record<string, string>; params?: Record<string, string> } = {}
) {
	const url = new URL(path, ORIGIN);
	let request = new Request(url);
	if (options.form) {
		const body = new FormData();
		for (const [key, value] of Object.entries(options.form)) body.append(key, value);
		request = new Request(url, { method: 'POST', body });
	}
	return {
		request,
		url,
		locals: { user, session: null, requestId: 'test' },
		params: options.params ?? {},
		route: { id: null },
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

/** An adoption paid on the fake checkout page, its events applied; returns the gift row. */
async function adopt(amountCents: number, levelId = LEVEL) {
	const attemptId = crypto.randomUUID();
	const { url } = await startCheckout({
		attemptId,
		patientId: PATIENT,
		levelId,
		amountCents,
		kind: 'self',
		supporter: { id: null, email: `${attemptId.slice(0, 8)}@example.test`, name: 'A Giver' }
	});
	expect(payCheckoutSession(url.split('/').at(-1)!, { cardNumber: '4242424242424242' }).ok).toBe(
		true
	);
	await fake.flushWebhooks();
	const [gift] = await db().select().from(gifts).where(eq(gifts.adoptionId, attemptId));
	return gift;
}

/** Sweeps what is available into a payout that arrives at once; returns the app's payout row. */
async function payOut() {
	expect(advanceClock(3).ok).toBe(true); // card payments become available after two days
	const made = createPayout({ arrivalDays: 0 });
	expect(made.ok, JSON.stringify(made)).toBe(true);
	await fake.flushWebhooks();
	const id = (made as { payout: { id: string } }).payout.id;
	const [row] = await db().select().from(payouts).where(eq(payouts.id, id));
	return row;
}

/** The processor's own balance transactions of a payout, read through the SDK. */
async function processorLines(payoutId: string) {
	const txns = [];
	for await (const t of stripe().balanceTransactions.list({ payout: payoutId, limit: 100 })) {
		txns.push(t);
	}
	return txns;
}

type PayoutPage = Exclude<Awaited<ReturnType<typeof payoutLoad>>, void>;
type ListPage = Exclude<Awaited<ReturnType<typeof listLoad>>, void>;

const openPayout = async (id: string, user: SessionUser = dev) =>
	(await payoutLoad(event(`/staff/ledger/payouts/${id}`, user, { params: { id } }))) as PayoutPage;
const list = async (user: SessionUser = dev) =>
	(await listLoad(event('/staff/ledger/payouts', user))) as ListPage;
const act = (
	name: 'note' | 'reconcile',
	id: string,
	user: SessionUser,
	form: Record<string, string>
) =>
	payoutActions[name](
		event(`/staff/ledger/payouts/${id}?/${name}`, user, { form, params: { id } })
	);

/** What a handler threw (an HTTP error or a redirect), or null when it returned. */
async function thrown(result: unknown): Promise<unknown> {
	try {
		await result;
		return null;
	} catch (err) {
		return err;
	}
}

function failure(result: unknown) {
	expect(isActionFailure(result)).toBe(true);
	if (!isActionFailure(result)) throw new Error('not a failure');
	expect(result.status).toBe(400);
	return result.data as unknown as { message: string };
}

/** What a refused action must leave as it was: the payout rows and every note. */
async function snapshot() {
	const [p, n] = await Promise.all([
		db().select().from(payouts).orderBy(asc(payouts.id)),
		db().select().from(reconciliationNotes).orderBy(asc(reconciliationNotes.issueKey))
	]);
	return { payouts: p, notes: n };
}

beforeAll(async () => {
	processor = await startTestProcessor('ledger-payouts');
	fake = processor.fake;
	dev = await person('Development', ['development']);
	admin = await person('Admin', ['admin']);
	supporter = await person('Supporter', ['supporter']);
	educator = await person('Educator', ['educator']);
	await db().insert(patients).values({
		id: PATIENT,
		slug: 'ledger-payouts-test',
		name: 'Brisa',
		species: 'green',
		lifeStage: 'juvenile',
		admittedOn: '2026-01-01',
		admissionReason: 'entanglement',
		status: 'admitted'
	});
	await db()
		.insert(adoptionLevels)
		.values([
			{ id: LEVEL, slug: 'payouts-ripple', name: 'Ripple', amountCents: 2500, interval: 'once' },
			{
				id: CLOSE_LEVEL,
				slug: 'payouts-swell',
				name: 'Swell',
				amountCents: 2500,
				interval: 'once',
				position: 1
			},
			{
				id: DISPUTE_LEVEL,
				slug: 'payouts-classroom',
				name: 'Reef Classroom',
				amountCents: 4000,
				interval: 'once',
				position: 2
			}
		]);
});
afterAll(() => processor?.stop());

let first: typeof payouts.$inferSelect;
let second: typeof payouts.$inferSelect;

describe('the payout pages', () => {
	it('list the payout with its open differences, and its page adds up to the payout', async () => {
		const kept = await adopt(2500);
		const lost = await adopt(4000);
		const refunded = await adopt(10000);
		expect(refund(refunded.chargeId!, 1000).ok).toBe(true);
		await fake.flushWebhooks();
		// As if one gift had never been recorded and another's amount had been mistyped.
		await db()
			.update(gifts)
			.set({ chargeId: 'ch_recorded_elsewhere_payouts' })
			.where(eq(gifts.id, lost.id));
		await db().update(gifts).set({ amountCents: 2400 }).where(eq(gifts.id, kept.id));
		first = await payOut();
		expect(first.status).toBe('paid');

		const listed = (await list()).payouts.find((p) => p.id === first.id)!;
		expect(listed).toMatchObject({
			status: 'paid',
			amountCents: first.amountCents,
			reconciled: null,
			openDifferences: 2
		});
		expect(listed.arrivalDate).toBe(first.arrivalDate!.toISOString().slice(0, 10));

		const page = await openPayout(first.id);
		// The processor's own figures through the SDK: the nets of everything but the payout itself.
		const txns = (await processorLines(first.id)).filter((t) => t.type !== 'payout');
		expect(txns.reduce((sum, t) => sum + t.net, 0)).toBe(first.amountCents);
		expect(page.summary).toMatchObject({
			grossCents: 2500 + 4000 + 10000,
			refundCents: -1000,
			netCents: first.amountCents,
			payoutCents: first.amountCents,
			differenceCents: 0
		});
		expect(page.summary.feeCents).toBe(txns.reduce((sum, t) => sum + t.fee, 0));
		expect(
			page.summary.grossCents +
				page.summary.refundCents +
				page.summary.disputeCents +
				page.summary.otherCents -
				page.summary.feeCents
		).toBe(first.amountCents);
		expect(page.balanced).toBe(true);
		expect(page.lines.filter((l) => l.type !== 'payout')).toHaveLength(txns.length);
		expect(page.issues.map((i) => i.kind).sort()).toEqual([
			'amount-differs',
			'charge-without-gift'
		]);
		expect(page.open).toBe(2);
		expect(page.canReconcile).toBe(true);
		const matched = page.lines.find((l) => l.chargeId === refunded.chargeId && l.type === 'charge');
		expect(matched?.giftId).toBe(refunded.id);
		expect(matched?.supporterEmail).toMatch(/@example\.test$/);
	});

	it('answers 404 for an unknown payout and sends a visitor to sign in', async () => {
		const missing = await thrown(openPayout('po_does_not_exist'));
		expect(isHttpError(missing) && missing.status).toBe(404);
		const visitor = await thrown(
			payoutLoad(event(`/staff/ledger/payouts/${first.id}`, null, { params: { id: first.id } }))
		);
		expect(isRedirect(visitor)).toBe(true);
		for (const user of [supporter, educator]) {
			const refused = await thrown(openPayout(first.id, user));
			expect(isHttpError(refused) && refused.status).toBe(403);
			const listRefused = await thrown(list(user));
			expect(isHttpError(listRefused) && listRefused.status).toBe(403);
		}
	});

	it('refuses note and reconcile to supporters and educators, changing nothing', async () => {
		const before = await snapshot();
		const [issue] = (await openPayout(first.id)).issues;
		for (const user of [supporter, educator]) {
			const noted = await thrown(
				act('note', first.id, user, { issueKey: issue.key, note: 'Seen.' })
			);
			expect(isHttpError(noted) && noted.status).toBe(403);
			const marked = await thrown(act('reconcile', first.id, user, {}));
			expect(isHttpError(marked) && marked.status).toBe(403);
		}
		expect(await snapshot()).toEqual(before);
	});

	it('refuses to reconcile while a difference has no note, and a blank note', async () => {
		const before = await snapshot();
		const result = failure(await act('reconcile', first.id, dev, { note: 'Looks right.' }));
		expect(result.message).toMatch(/note on each difference first \(2 without one\)/);
		const [issue] = (await openPayout(first.id)).issues;
		const blank = failure(await act('note', first.id, dev, { issueKey: issue.key, note: '   ' }));
		expect(blank.message).toMatch(/Write a note/);
		const unknown = failure(
			await act('note', first.id, dev, { issueKey: 'charge:ch_unknown', note: 'Seen.' })
		);
		expect(unknown.message).toMatch(/no longer listed/);
		expect(await snapshot()).toEqual(before);
	});

	it('takes a note from development and from an admin, then development reconciles', async () => {
		const { issues } = await openPayout(first.id);
		const byDev = await act('note', first.id, dev, {
			issueKey: issues[0].key,
			note: 'Recorded under another charge; checked with the processor.'
		});
		expect(isActionFailure(byDev)).toBe(false);
		expect((await openPayout(first.id)).open).toBe(1);
		const byAdmin = await act('note', first.id, admin, {
			issueKey: issues[1].key,
			note: 'Amount typed by hand; the charge is right.'
		});
		expect(isActionFailure(byAdmin)).toBe(false);
		const notes = await db()
			.select()
			.from(reconciliationNotes)
			.where(eq(reconciliationNotes.payoutId, first.id));
		expect(new Map(notes.map((n) => [n.issueKey, n.authorId]))).toEqual(
			new Map([
				[issues[0].key, dev.id],
				[issues[1].key, admin.id]
			])
		);
		expect((await list()).payouts.find((p) => p.id === first.id)?.openDifferences).toBe(0);

		const done = await act('reconcile', first.id, dev, { note: 'Matches the bank statement.' });
		expect(isActionFailure(done)).toBe(false);
		const [row] = await db().select().from(payouts).where(eq(payouts.id, first.id));
		expect(row).toMatchObject({
			reconciledBy: dev.id,
			reconcileNote: 'Matches the bank statement.'
		});
		expect(row.reconciledAt).toBeInstanceOf(Date);

		const page = await openPayout(first.id);
		expect(page.payout.reconciled).toMatchObject({
			by: dev.name,
			note: 'Matches the bank statement.'
		});
		expect(page.canReconcile).toBe(false);
		const listed = (await list()).payouts.find((p) => p.id === first.id)!;
		expect(listed.reconciled).toEqual({
			by: dev.name,
			on: row.reconciledAt!.toISOString().slice(0, 10)
		});

		const again = failure(await act('reconcile', first.id, admin, {}));
		expect(again.message).toMatch(/already reconciled/);
		const [unchanged] = await db().select().from(payouts).where(eq(payouts.id, first.id));
		expect(unchanged).toEqual(row);
	});

	it('lets an admin reconcile a payout without differences, listed newest first', async () => {
		await adopt(3000);
		second = await payOut();
		expect((await openPayout(second.id, admin)).issues).toEqual([]);
		const done = await act('reconcile', second.id, admin, {});
		expect(isActionFailure(done)).toBe(false);
		const [row] = await db().select().from(payouts).where(eq(payouts.id, second.id));
		expect(row).toMatchObject({ reconciledBy: admin.id, reconcileNote: null });

		const ids = (await list(admin)).payouts.map((p) => p.id);
		expect(ids.indexOf(second.id)).toBeLessThan(ids.indexOf(first.id));
	});
});

describe('the payouts CSV', () => {
	it('has the header exactly and one row per payout line, nets adding up to each payout', async () => {
		const response = await payoutsCsvGet(event('/api/ledger/payouts.csv', dev));
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toBe('text/csv; charset=utf-8');
		expect(response.body).toBeInstanceOf(ReadableStream);
		const text = await response.text();
		expect(text.split('\r\n')[0]).toBe(PAYOUT_HEADER);
		const records = parse(text, { columns: true }) as Record<string, string>[];

		const stored = await db().select().from(payoutLines);
		expect(records).toHaveLength(stored.length);
		expect(new Set(records.map((r) => r.line_id))).toEqual(new Set(stored.map((l) => l.id)));

		for (const payout of [first, second]) {
			const rows = records.filter((r) => r.payout_id === payout.id);
			// Against the processor's own list of the payout's balance transactions.
			expect(rows).toHaveLength((await processorLines(payout.id)).length);
			const net = rows
				.filter((r) => r.line_type !== 'payout')
				.reduce((sum, r) => sum + Number(r.net_cents), 0);
			expect(net).toBe(payout.amountCents);
			expect(rows.every((r) => r.payout_amount_cents === String(payout.amountCents))).toBe(true);
			expect(rows.every((r) => r.payout_status === 'paid')).toBe(true);
			expect(rows[0].arrival_date).toBe(payout.arrivalDate!.toISOString().slice(0, 10));
		}
		const firstRows = records.filter((r) => r.payout_id === first.id);
		expect(firstRows.every((r) => r.reconciled_by === dev.name)).toBe(true);
		expect(firstRows[0].reconciled_at).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}Z$/);
		// Oldest payout first.
		expect(records.findIndex((r) => r.payout_id === first.id)).toBeLessThan(
			records.findIndex((r) => r.payout_id === second.id)
		);
	});

	it('reads the same rows in small batches as in one', async () => {
		const whole: string[] = [];
		for await (const batch of payoutLinesInBatches(10_000))
			whole.push(...batch.map((r) => r.lineId));
		const small: string[] = [];
		let batches = 0;
		for await (const batch of payoutLinesInBatches(2)) {
			batches++;
			expect(batch.length).toBeLessThanOrEqual(2);
			small.push(...batch.map((r) => r.lineId));
		}
		expect(batches).toBeGreaterThan(1);
		expect(small).toEqual(whole);
	});

	it('is refused to supporters and educators', async () => {
		for (const user of [supporter, educator]) {
			const refused = await thrown(payoutsCsvGet(event('/api/ledger/payouts.csv', user)));
			expect(isHttpError(refused) && refused.status).toBe(403);
		}
		const visitor = await thrown(payoutsCsvGet(event('/api/ledger/payouts.csv', null)));
		expect(isHttpError(visitor) && visitor.status).toBe(401);
	});
});

const fields: (keyof CloseFigures)[] = [
	'gifts',
	'grossCents',
	'refundsCents',
	'disputesCents',
	'feesCents',
	'netCents'
];
function sumOf(rows: CloseFigures[]): CloseFigures {
	const total = {
		gifts: 0,
		grossCents: 0,
		refundsCents: 0,
		disputesCents: 0,
		feesCents: 0,
		netCents: 0
	};
	for (const row of rows) for (const f of fields) total[f] += row[f];
	return total;
}

describe('the monthly close', () => {
	it('sums a month per level: gross, refunds, disputes and fees, and the year adds up', async () => {
		const small = await adopt(2500, CLOSE_LEVEL);
		const large = await adopt(5000, CLOSE_LEVEL);
		expect(refund(large.chargeId!, 1000).ok).toBe(true);
		const contested = await adopt(4000, DISPUTE_LEVEL);
		const dispute = openDispute(contested.chargeId!);
		expect(dispute.ok).toBe(true);
		expect(closeDispute((dispute as { dispute: { id: string } }).dispute.id, 'lost').ok).toBe(true);
		await fake.flushWebhooks();

		const rows = await Promise.all(
			[small, large, contested].map(
				async (g) => (await db().select().from(gifts).where(eq(gifts.id, g.id)))[0]
			)
		);
		const [a, b, c] = rows;
		expect(b.refundedCents).toBe(1000);
		expect(c.status).toBe('disputed');
		const month = a.paidAt!.toISOString().slice(0, 7);
		expect(b.paidAt!.toISOString().slice(0, 7)).toBe(month);
		expect(c.paidAt!.toISOString().slice(0, 7)).toBe(month);
		// The fee of each charge as the processor reports it on its balance transaction.
		const processorFee = async (g: typeof a) =>
			(await stripe().balanceTransactions.retrieve(g.balanceTransactionId!)).fee;
		const fees = (await processorFee(a)) + (await processorFee(b));
		expect(fees).toBe(a.feeCents! + b.feeCents!);
		expect(fees).toBeGreaterThan(0);

		// A cheque recorded by hand in the same month.
		const manualId = crypto.randomUUID();
		await db().insert(gifts).values({
			id: manualId,
			source: 'manual',
			method: 'cheque',
			donorName: 'A Neighbour',
			donorEmail: 'neighbour@example.test',
			status: 'paid',
			amountCents: 1500,
			currency: 'usd',
			paidAt: a.paidAt
		});

		const year = Number(month.slice(0, 4));
		const close = await monthlyClose(year);
		expect(close.months.map((m) => m.month)).toEqual(
			Array.from({ length: 12 }, (_, i) => `${year}-${String(i + 1).padStart(2, '0')}`)
		);
		const theMonth = close.months.find((m) => m.month === month)!;
		const swell = theMonth.rows.find((r) => r.levelId === CLOSE_LEVEL)!;
		expect(swell).toEqual({
			levelId: CLOSE_LEVEL,
			level: 'Swell',
			gifts: 2,
			grossCents: 7500,
			refundsCents: 1000,
			disputesCents: 0,
			feesCents: fees,
			netCents: 7500 - 1000 - fees
		});
		const classroom = theMonth.rows.find((r) => r.levelId === DISPUTE_LEVEL)!;
		expect(classroom).toMatchObject({
			gifts: 1,
			grossCents: 4000,
			refundsCents: 0,
			disputesCents: 4000,
			feesCents: c.feeCents,
			netCents: 4000 - 4000 - c.feeCents!
		});
		const manual = theMonth.rows.find((r) => r.levelId === null)!;
		expect(manual).toMatchObject({
			level: MANUAL_GIFTS,
			gifts: 1,
			grossCents: 1500,
			feesCents: 0,
			netCents: 1500
		});
		// Manual gifts come after the levels, in the order staff set them.
		expect(theMonth.rows.at(-1)?.levelId).toBeNull();

		// Every paid gift of the month is counted once, whatever its level (from the gifts table).
		const everyGift = (await db().select().from(gifts)).filter(
			(g) => g.status !== 'failed' && g.paidAt?.toISOString().slice(0, 7) === month
		);
		expect(theMonth.total.gifts).toBe(everyGift.length);
		expect(theMonth.total.grossCents).toBe(everyGift.reduce((s, g) => s + g.amountCents, 0));
		expect(theMonth.total.refundsCents).toBe(everyGift.reduce((s, g) => s + g.refundedCents, 0));
		expect(theMonth.total.feesCents).toBe(everyGift.reduce((s, g) => s + (g.feeCents ?? 0), 0));

		for (const m of close.months) expect(m.total).toEqual(sumOf(m.rows));
		expect(close.total).toEqual(sumOf(close.months.map((m) => m.total)));
		expect(sumOf(close.yearRows)).toEqual(close.total);
		for (const f of [close.total, ...close.months.map((m) => m.total)]) {
			expect(f.netCents).toBe(f.grossCents - f.refundsCents - f.disputesCents - f.feesCents);
		}
		// Another year has none of these gifts.
		expect((await monthlyClose(year - 1)).total.gifts).toBe(0);

		// The page shows the same figures, formatted.
		const page = (await closeLoad(event(`/staff/ledger/close?year=${year}`, admin))) as Exclude<
			Awaited<ReturnType<typeof closeLoad>>,
			void
		>;
		expect(page.year).toBe(year);
		expect(page.years).toContain(year);
		const pageRow = page.months
			.find((m) => m.month === month)!
			.rows.find((r) => r.levelId === CLOSE_LEVEL)!;
		expect(pageRow).toMatchObject({ gross: '$75.00', refunds: '$10.00', grossCents: 7500 });

		// The CSV: the header exactly, and the Swell row of that month.
		const response = await closeCsvGet(event(`/api/ledger/close.csv?year=${year}`, dev));
		expect(response.status).toBe(200);
		const text = await response.text();
		expect(text).toBe(closeCsv(await monthlyClose(year)));
		expect(text.split('\r\n')[0]).toBe(CLOSE_HEADER);
		const records = parse(text, { columns: true }) as Record<string, string>[];
		expect(records.find((r) => r.month === month && r.level === 'Swell')).toEqual({
			month,
			level: 'Swell',
			gifts: '2',
			gross_cents: '7500',
			refunds_cents: '1000',
			disputes_cents: '0',
			fees_cents: String(fees),
			net_cents: String(7500 - 1000 - fees)
		});
		expect(records.find((r) => r.month === String(year) && r.level === 'All levels')).toMatchObject(
			{
				gifts: String(close.total.gifts),
				net_cents: String(close.total.netCents)
			}
		);
	});

	it('refuses a bad year with 400 and a message', async () => {
		for (const year of ['abc', '1999', '2101', '20.5', '-2026', '12026']) {
			const response = await closeCsvGet(event(`/api/ledger/close.csv?year=${year}`, dev));
			expect(response.status, year).toBe(400);
			expect(((await response.json()) as { message: string }).message).toMatch(/from 2000 to 2100/);
			const page = await thrown(
				closeLoad(event(`/staff/ledger/close?year=${encodeURIComponent(year)}`, dev))
			);
			expect(isHttpError(page) && page.status).toBe(400);
			if (isHttpError(page)) expect(page.body.message).toMatch(/from 2000 to 2100/);
		}
		expect(parseCloseYear(null, new Date('2031-06-01T00:00:00Z'))).toEqual({
			ok: true,
			year: 2031
		});
		expect(parseCloseYear('2000')).toEqual({ ok: true, year: 2000 });
		expect(parseCloseYear('2100')).toEqual({ ok: true, year: 2100 });
		await expect(monthlyClose(1999)).rejects.toBeInstanceOf(RangeError);
	});

	it('is refused to supporters and educators', async () => {
		for (const user of [supporter, educator]) {
			const page = await thrown(closeLoad(event('/staff/ledger/close', user)));
			expect(isHttpError(page) && page.status).toBe(403);
			const csv = await thrown(closeCsvGet(event('/api/ledger/close.csv', user)));
			expect(isHttpError(csv) && csv.status).toBe(403);
		}
	});
});
