// The Ledger's gift views: the JSON list behind the gifts table (filters, sorting, paging,
// totals), the streamed CSV export, the supporter page, the manual gift form and the landing
// page, with gifts paid through the official SDK against the local fake processor.
import { isActionFailure, isHttpError, isRedirect } from '@sveltejs/kit';
import { parse } from 'csv-parse/sync';
import { count, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Role } from '$lib/roles';
import { startCheckout } from '$lib/server/adoptions/checkout';
import { adoptionLevels, gifts, outbox, patients, receipts, users } from '$lib/server/db/schema';
import { csvCell } from '$lib/server/ledger/csv';
import {
	advanceClock,
	payCheckoutSession,
	refund,
	type FakeStripe
} from '$lib/server/payments/fake';
import { GET as giftsCsv } from '../../src/routes/api/ledger/gifts.csv/+server';
import { GET as giftsJson } from '../../src/routes/api/ledger/gifts/+server';
import { load as ledgerLoad } from '../../src/routes/staff/ledger/+page.server';
import { load as giftsPageLoad } from '../../src/routes/staff/ledger/gifts/+page.server';
import {
	actions as newGiftActions,
	load as newGiftLoad
} from '../../src/routes/staff/ledger/gifts/new/+page.server';
import { load as supporterLoad } from '../../src/routes/staff/ledger/supporters/[email]/+page.server';
import { useTestDatabase } from '../setup/test-db';
import { startTestProcessor, type TestProcessor } from './fake-processor';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

const ORIGIN = 'http://127.0.0.1:5173';
const SALITRE = crypto.randomUUID();
const ESPUMA = crypto.randomUUID();
const RIPPLE = crypto.randomUUID();
const SWELL = crypto.randomUUID();

// The exact header accounting relies on (README.md, "Ledger exports"); written out, not imported.
const HEADER =
	'gift_id,paid_on,source,status,amount_cents,fee_cents,net_cents,refunded_cents,currency,' +
	'fair_market_value_cents,donor_name,donor_email,method,reference,patient,level,interval,' +
	'charge_id,invoice_id,payout_id';

let processor: TestProcessor;
let fake: FakeStripe;
let staff: SessionUser;
let admin: SessionUser;
let maren: SessionUser;
let tobias: SessionUser;
let ines: SessionUser;
let formula: SessionUser;

interface GiftRow {
	id: string;
	paidOn: string | null;
	source: string;
	status: string;
	amountCents: number;
	feeCents: number | null;
	netCents: number | null;
	refundedCents: number;
	donorName: string;
	donorEmail: string;
	interval: string | null;
	patientName: string | null;
	levelName: string | null;
	method: string | null;
}
interface GiftList {
	rows: GiftRow[];
	total: number;
	page: number;
	pageSize: number;
	pageCount: number;
	totals: { amountCents: number; refundedCents: number; netCents: number };
}

async function person(name: string, roles: Role[] = ['supporter'], email?: string) {
	const id = crypto.randomUUID();
	const address = email ?? `${name.split(' ')[0].toLowerCase()}-${id.slice(0, 6)}@example.test`;
	await db().insert(users).values({ id, email: address, name, emailVerified: true });
	return { id, email: address, name, roles } satisfies SessionUser;
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
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

async function listJson(query: string, user: SessionUser = staff) {
	const response = await giftsJson(event(`/api/ledger/gifts?${query}`, user));
	expect(response.status).toBe(200);
	return (await response.json()) as GiftList;
}

const all = (query = '') => listJson(`pageSize=200&${query}`);

/** An adoption paid on the fake checkout page, its events applied. */
async function adopt(supporter: SessionUser, patientId: string, levelId: string, cents: number) {
	const attemptId = crypto.randomUUID();
	const { url } = await startCheckout({
		attemptId,
		patientId,
		levelId,
		amountCents: cents,
		kind: 'self',
		supporter: { id: supporter.id, email: supporter.email, name: supporter.name }
	});
	const paid = payCheckoutSession(url.split('/').at(-1)!, { cardNumber: '4242424242424242' });
	expect(paid.ok).toBe(true);
	await fake.flushWebhooks();
	return attemptId;
}

const recordGift = (form: Record<string, string>, user: SessionUser = staff) =>
	newGiftActions.default(event('/staff/ledger/gifts/new', user, { form }));

async function expectRedirectToManualList(result: unknown) {
	const thrown = await Promise.resolve(result).then(
		() => null,
		(err: unknown) => err
	);
	expect(isRedirect(thrown)).toBe(true);
	if (isRedirect(thrown)) {
		expect(thrown.status).toBe(303);
		expect(thrown.location).toBe('/staff/ledger/gifts?interval=manual');
	}
}

async function tableCounts() {
	const [[g], [r], [o]] = await Promise.all([
		db().select({ n: count() }).from(gifts),
		db().select({ n: count() }).from(receipts),
		db().select({ n: count() }).from(outbox)
	]);
	return { gifts: g.n, receipts: r.n, outbox: o.n };
}

async function csvText(query = '') {
	const response = await giftsCsv(event(`/api/ledger/gifts.csv?${query}`, staff));
	expect(response.status).toBe(200);
	return { response, text: await response.text() };
}

interface SupporterData {
	name: string | null;
	hasAccount: boolean;
	given: string;
	gifts: { source: string; amount: string }[];
	adoptions: { patientName: string; levelName: string; status: string }[];
	receipts: { status: string; kind: string; amount: string }[];
}
interface GiftsPageData {
	options: { patients: { id: string; name: string }[]; levels: { id: string; name: string }[] };
	values: Record<string, string>;
	query: { sort: string; dir: string; page: number; pageSize: number };
	list: GiftList;
	problem: { message: string; errors: Record<string, string> } | null;
}

const supporterView = async (email: string) =>
	(await supporterLoad(
		event('/staff/ledger/supporters/x', staff, { params: { email } })
	)) as unknown as SupporterData;

const giftsPageView = async (path: string) =>
	(await giftsPageLoad(event(path, staff))) as unknown as GiftsPageData;

const sum = (rows: GiftRow[], key: 'amountCents' | 'refundedCents' | 'netCents') =>
	rows.reduce((total, row) => total + (row[key] ?? 0), 0);

beforeAll(async () => {
	processor = await startTestProcessor('ledger-pages');
	fake = processor.fake;
	await db()
		.insert(patients)
		.values([
			{
				id: SALITRE,
				slug: 'ledger-salitre',
				name: 'Salitre',
				species: 'green',
				lifeStage: 'juvenile',
				admittedOn: '2026-01-10',
				admissionReason: 'entanglement',
				status: 'in_rehabilitation'
			},
			{
				id: ESPUMA,
				slug: 'ledger-espuma',
				name: 'Espuma',
				species: 'loggerhead',
				lifeStage: 'subadult',
				admittedOn: '2026-02-14',
				admissionReason: 'cold_stunning',
				status: 'in_rehabilitation'
			}
		]);
	await db()
		.insert(adoptionLevels)
		.values([
			{ id: RIPPLE, slug: 'ledger-ripple', name: 'Ripple', amountCents: 2500, interval: 'once' },
			{
				id: SWELL,
				slug: 'ledger-swell',
				name: 'Swell',
				amountCents: 1500,
				interval: 'month',
				goods: 'a keepsake kit',
				fairMarketValueCents: 1200
			}
		]);
	staff = await person('Dana Keel', ['development']);
	admin = await person('Ana Mooring', ['admin']);
	maren = await person('Maren Holloway');
	tobias = await person('Tobias Quint');
	ines = await person('Ines Farrow');
	formula = await person('=HYPERLINK("x")', ['supporter'], 'formula@example.test');

	// One-time, monthly with one renewal, and one-time partly refunded.
	await adopt(maren, SALITRE, RIPPLE, 2500);
	await adopt(tobias, ESPUMA, SWELL, 1500);
	expect(advanceClock(31).ok).toBe(true);
	await fake.flushWebhooks();
	const refunded = await adopt(ines, SALITRE, RIPPLE, 10000);
	const [paid] = await db().select().from(gifts).where(eq(gifts.adoptionId, refunded));
	expect(refund(paid.chargeId!, 4000).ok).toBe(true);
	await fake.flushWebhooks();

	// Gifts recorded by hand, through the form.
	await expectRedirectToManualList(
		recordGift({
			supporterEmail: maren.email.toUpperCase(),
			amount: '50',
			receivedOn: '2025-11-20',
			method: 'cheque',
			reference: '1042'
		})
	);
	await expectRedirectToManualList(
		recordGift({
			supporterEmail: formula.email,
			amount: '10.00',
			receivedOn: '2025-12-01',
			method: 'cash'
		})
	);
	// Paid in the last millisecond of a day (UTC): inside a range that ends that day.
	await db()
		.insert(gifts)
		.values({
			id: crypto.randomUUID(),
			source: 'manual',
			method: 'bank_transfer',
			donorName: 'Orla Tidewell',
			donorEmail: 'orla@example.test',
			status: 'paid',
			amountCents: 700,
			currency: 'usd',
			paidAt: new Date('2025-06-30T23:59:59.999Z')
		});
}, 120_000);

afterAll(() => processor?.stop());

describe('the gifts list (JSON)', () => {
	it('lists every gift with its source, and answers privately', async () => {
		const response = await giftsJson(event('/api/ledger/gifts?pageSize=200', staff));
		expect(response.headers.get('cache-control')).toBe('private, no-store');
		const list = (await response.json()) as GiftList;
		expect(list.total).toBe(7);
		expect(list.rows).toHaveLength(7);
		const bySource = (source: string) => list.rows.filter((r) => r.source === source).length;
		expect([bySource('processor'), bySource('manual')]).toEqual([4, 3]);
		// Admins see it too.
		expect((await listJson('', admin)).total).toBe(7);
	});

	it('filters by status, interval (manual included), patient and level', async () => {
		const partly = await all('status=partially_refunded');
		expect(partly.rows.map((r) => [r.donorName, r.amountCents, r.refundedCents])).toEqual([
			['Ines Farrow', 10000, 4000]
		]);
		expect((await all('status=paid')).total).toBe(6);

		const manual = await all('interval=manual');
		expect(manual.rows.map((r) => r.donorName).sort()).toEqual(
			['=HYPERLINK("x")', 'Maren Holloway', 'Orla Tidewell'].sort()
		);
		expect(manual.rows.every((r) => r.source === 'manual')).toBe(true);

		const monthly = await all('interval=month');
		expect(monthly.rows.map((r) => [r.donorName, r.amountCents, r.interval])).toEqual([
			['Tobias Quint', 1500, 'month'],
			['Tobias Quint', 1500, 'month']
		]);
		const once = await all('interval=once');
		expect(once.rows.map((r) => r.donorName).sort()).toEqual(['Ines Farrow', 'Maren Holloway']);

		const salitre = await all(`patient=${SALITRE}`);
		expect(salitre.rows.every((r) => r.patientName === 'Salitre')).toBe(true);
		expect(salitre.total).toBe(2);
		expect((await all(`patient=${ESPUMA}`)).total).toBe(2);
		const swell = await all(`level=${SWELL}`);
		expect(swell.rows.map((r) => r.levelName)).toEqual(['Swell', 'Swell']);

		// Filters combine.
		expect((await all(`patient=${SALITRE}&status=paid`)).rows.map((r) => r.donorName)).toEqual([
			'Maren Holloway'
		]);
	});

	it('searches part of a name or an e-mail address, in any case', async () => {
		for (const q of ['hollo', 'HOLLOWAY', 'mAReN']) {
			const found = await all(`q=${encodeURIComponent(q)}`);
			expect(found.rows.map((r) => [r.donorName, r.source]).sort()).toEqual([
				['Maren Holloway', 'manual'],
				['Maren Holloway', 'processor']
			]);
		}
		const byEmail = await all(`q=${encodeURIComponent(ines.email.slice(0, 8).toUpperCase())}`);
		expect(byEmail.rows.map((r) => r.donorEmail)).toEqual([ines.email]);
		// LIKE wildcards are searched for as text.
		expect((await all('q=%25')).total).toBe(0);
		expect((await all('q=_')).total).toBe(0);
	});

	it('takes a date range that includes the whole of the last day', async () => {
		const day = async (query: string) => (await all(query)).rows.map((r) => r.donorName);
		expect(await day('from=2025-11-20&to=2025-11-20')).toEqual(['Maren Holloway']);
		expect(await day('from=2025-06-30&to=2025-06-30')).toEqual(['Orla Tidewell']);
		expect(await day('to=2025-06-29')).toEqual([]);
		expect(await day('from=2025-07-01&to=2025-12-01')).toEqual([
			'=HYPERLINK("x")',
			'Maren Holloway'
		]);
		expect((await all('from=2025-12-02')).total).toBe(4);
	});

	it('refuses a date that does not exist, with a message', async () => {
		for (const from of ['2026-13-01', '2026-02-30', 'yesterday']) {
			const response = await giftsJson(event(`/api/ledger/gifts?from=${from}`, staff));
			expect(response.status).toBe(400);
			expect(response.headers.get('cache-control')).toBe('private, no-store');
			expect(await response.json()).toEqual({
				message: 'Enter dates as YYYY-MM-DD.',
				errors: { from: 'Enter dates as YYYY-MM-DD.' }
			});
		}
	});

	it('sorts by amount either way, and by supporter', async () => {
		const amounts = (list: GiftList) => list.rows.map((r) => r.amountCents);
		const ascending = amounts(await all('sort=amount&dir=asc'));
		expect(ascending).toEqual([700, 1000, 1500, 1500, 2500, 5000, 10000]);
		expect(amounts(await all('sort=amount&dir=desc'))).toEqual([...ascending].reverse());
		const names = (await all('sort=supporter&dir=asc')).rows.map((r) => r.donorName);
		expect(names).toEqual([...names].sort((a, b) => (a < b ? -1 : a > b ? 1 : 0)));
		// An unknown sort falls back to the newest first.
		const newest = (await all('sort=nonsense')).rows.map((r) => r.paidOn);
		expect(newest[0]! >= newest[1]!).toBe(true);
	});

	it('pages: one gift a page gives as many pages as gifts, each gift once', async () => {
		const first = await listJson('pageSize=1&sort=amount&dir=asc');
		expect(first.pageCount).toBe(first.total);
		expect(first.total).toBe(7);
		const seen: string[] = [];
		for (let page = 1; page <= first.pageCount; page++) {
			const list = await listJson(`pageSize=1&sort=amount&dir=asc&page=${page}`);
			expect(list.rows).toHaveLength(1);
			expect(list.page).toBe(page);
			seen.push(list.rows[0].id);
		}
		expect(new Set(seen).size).toBe(7);
		expect((await listJson('pageSize=1&page=8')).rows).toEqual([]);
	});

	it('gives totals equal to the sum of the rows', async () => {
		for (const query of ['', 'interval=once', 'status=paid', `patient=${ESPUMA}`]) {
			const list = await all(query);
			expect(list.totals).toEqual({
				amountCents: sum(
					list.rows.filter((r) => r.status !== 'failed'),
					'amountCents'
				),
				refundedCents: sum(list.rows, 'refundedCents'),
				netCents: sum(list.rows, 'netCents')
			});
		}
		const once = await all('interval=once');
		expect(once.totals.amountCents).toBe(12500);
		expect(once.totals.refundedCents).toBe(4000);
		// Paid on a page of one gift: the totals still cover every match.
		expect((await listJson('pageSize=1')).totals).toEqual((await all()).totals);
	});
});

describe('who may see the gifts', () => {
	const pageEvents = () => [
		() => ledgerLoad(event('/staff/ledger', null)),
		() => giftsPageLoad(event('/staff/ledger/gifts', null)),
		() => newGiftLoad(event('/staff/ledger/gifts/new', null)),
		() =>
			supporterLoad(
				event(`/staff/ledger/supporters/${encodeURIComponent(maren.email)}`, null, {
					params: { email: maren.email }
				})
			)
	];

	async function statusOf(call: () => unknown): Promise<number> {
		try {
			const result = await call();
			return result instanceof Response ? result.status : 200;
		} catch (err) {
			if (isHttpError(err)) return err.status;
			if (isRedirect(err)) return err.status;
			throw err;
		}
	}

	it('answers supporters and educators 403 and anonymous requests 401 on the API and the CSV', async () => {
		const supporter = await person('Sol Reader');
		const educator = await person('Eda Story', ['educator']);
		for (const [user, expected] of [
			[supporter, 403],
			[educator, 403],
			[null, 401],
			[staff, 200],
			[admin, 200]
		] as const) {
			expect(await statusOf(() => giftsJson(event('/api/ledger/gifts', user)))).toBe(expected);
			expect(await statusOf(() => giftsCsv(event('/api/ledger/gifts.csv', user)))).toBe(expected);
		}
	});

	it('answers supporters and educators 403 on the pages and the form, and sends visitors to sign in', async () => {
		const supporter = await person('Sol Reader');
		const educator = await person('Eda Story', ['educator']);
		const as = (user: SessionUser | null) => [
			() => ledgerLoad(event('/staff/ledger', user)),
			() => giftsPageLoad(event('/staff/ledger/gifts', user)),
			() => newGiftLoad(event('/staff/ledger/gifts/new', user)),
			() =>
				supporterLoad(
					event(`/staff/ledger/supporters/${encodeURIComponent(maren.email)}`, user, {
						params: { email: maren.email }
					})
				)
		];
		for (const user of [supporter, educator]) {
			for (const call of as(user)) expect(await statusOf(call)).toBe(403);
		}
		for (const call of pageEvents()) {
			const thrown = await Promise.resolve()
				.then(call)
				.then(
					() => null,
					(err: unknown) => err
				);
			expect(isRedirect(thrown) && thrown.location.startsWith('/signin?redirectTo=')).toBe(true);
		}
		const before = await tableCounts();
		const form = {
			supporterEmail: maren.email,
			amount: '5',
			receivedOn: '2025-01-02',
			method: 'cash'
		};
		expect(await statusOf(() => recordGift(form, supporter))).toBe(403);
		expect(await statusOf(() => recordGift(form, educator))).toBe(403);
		expect(
			await statusOf(() => newGiftActions.default(event('/staff/ledger/gifts/new', null, { form })))
		).toBe(401);
		expect(await tableCounts()).toEqual(before);
		for (const call of as(staff)) expect(await statusOf(call)).toBe(200);
	});
});

describe('the CSV export', () => {
	it('names the columns exactly and writes one line per gift, amounts in cents', async () => {
		const { response, text } = await csvText();
		expect(response.headers.get('content-type')).toBe('text/csv; charset=utf-8');
		expect(response.headers.get('cache-control')).toBe('private, no-store');
		expect(response.headers.get('content-disposition')).toMatch(
			/^attachment; filename="tideward-gifts-\d{4}-\d{2}-\d{2}\.csv"$/
		);
		const lines = text.split('\r\n');
		expect(lines.at(-1)).toBe('');
		expect(lines[0]).toBe(HEADER);
		expect(lines).toHaveLength(1 + 7 + 1);

		// Read back by an RFC 4180 parser (csv-parse), not by our own writer.
		const records = parse(text, { columns: true }) as Record<string, string>[];
		const list = await all();
		expect(records.map((r) => r.gift_id).sort()).toEqual(list.rows.map((r) => r.id).sort());
		// Oldest first.
		const days = records.map((r) => r.paid_on);
		expect(days).toEqual([...days].sort());
		const ines_ = records.find((r) => r.donor_email === ines.email)!;
		expect(ines_).toMatchObject({
			source: 'processor',
			status: 'partially_refunded',
			amount_cents: '10000',
			refunded_cents: '4000',
			currency: 'usd',
			patient: 'Salitre',
			level: 'Ripple',
			interval: 'once',
			method: ''
		});
		expect(ines_.charge_id).toMatch(/^ch_/);
		// The fake charges the standard US card rate, 2.9 % + 30 ¢ (Stripe's published pricing):
		// $3.20 on $100, and the processor's net is the rest, before the refund.
		expect([ines_.fee_cents, ines_.net_cents]).toEqual(['320', '9680']);
		const cheque = records.find((r) => r.method === 'cheque')!;
		expect(cheque).toMatchObject({
			source: 'manual',
			paid_on: '2025-11-20',
			amount_cents: '5000',
			fee_cents: '',
			donor_name: 'Maren Holloway',
			reference: '1042',
			patient: ''
		});
	});

	it('neutralises a donor name that a spreadsheet would run as a formula', async () => {
		const { text } = await csvText();
		const line = text.split('\r\n').find((l) => l.includes('formula@example.test'))!;
		// OWASP "CSV Injection": leading apostrophe; RFC 4180 §2.7: inner quotes doubled.
		expect(line).toContain(`,"'=HYPERLINK(""x"")",formula@example.test,`);
		const [record] = (parse(text, { columns: true }) as Record<string, string>[]).filter(
			(r) => r.donor_email === 'formula@example.test'
		);
		expect(record.donor_name).toBe(`'=HYPERLINK("x")`);
		expect(record.amount_cents).toBe('1000');
	});

	it('writes cells as RFC 4180 and the OWASP guidance say, read back by csv-parse', () => {
		const cells = [
			'plain',
			'a,b',
			'say "hi"',
			'two\nlines',
			'=1+2',
			'+1',
			'-1',
			'@SUM(A1)',
			'\tx',
			'\rx',
			'a;=b'
		];
		const line = cells.map(csvCell).join(',');
		const [parsed] = parse(line) as string[][];
		expect(parsed).toEqual([
			'plain',
			'a,b',
			'say "hi"',
			'two\nlines',
			"'=1+2",
			"'+1",
			"'-1",
			"'@SUM(A1)",
			"'\tx",
			"'\rx",
			'a;=b'
		]);
		expect(csvCell(-250)).toBe('-250');
		expect(csvCell(null)).toBe('');
		expect(() => csvCell(2.5)).toThrow(RangeError);
	});

	it('applies the list filters and ignores paging', async () => {
		const { text } = await csvText('interval=manual&page=3&pageSize=1');
		const records = parse(text, { columns: true }) as Record<string, string>[];
		expect(records).toHaveLength(3);
		expect(records.every((r) => r.source === 'manual')).toBe(true);
		const bad = await giftsCsv(event('/api/ledger/gifts.csv?to=2026-13-01', staff));
		expect(bad.status).toBe(400);
		expect(await bad.json()).toMatchObject({ errors: { to: 'Enter dates as YYYY-MM-DD.' } });
	});

	it('streams: the body is read chunk by chunk', async () => {
		const response = await giftsCsv(event('/api/ledger/gifts.csv', staff));
		const reader = response.body!.getReader();
		const decoder = new TextDecoder();
		let chunks = 0;
		let lines = 0;
		for (;;) {
			const { done, value } = await reader.read();
			if (done) break;
			chunks++;
			lines += decoder.decode(value, { stream: true }).split('\n').length - 1;
		}
		expect(lines).toBe(1 + 7);
		// The header goes out before the first batch is read.
		expect(chunks).toBeGreaterThanOrEqual(2);
	});
});

describe('the supporter page', () => {
	it('shows the gifts, adoptions and receipts of one address, in any case', async () => {
		const data = await supporterView(maren.email.toUpperCase());
		expect(data.name).toBe('Maren Holloway');
		expect(data.hasAccount).toBe(true);
		expect(data.gifts.map((g) => [g.source, g.amount])).toEqual([
			['processor', '$25.00'],
			['manual', '$50.00']
		]);
		expect(data.adoptions.map((a) => [a.patientName, a.levelName, a.status])).toEqual([
			['Salitre', 'Ripple', 'active']
		]);
		expect(data.receipts).toHaveLength(2);
		expect(data.given).toBe('$75.00');
	});

	it('counts refunds out of what was given', async () => {
		const data = await supporterView(ines.email);
		// $100 paid, $40 refunded: the receipt that stands is the corrected one for $60.
		expect(data.given).toBe('$60.00');
		expect(data.receipts.map((r) => [r.status, r.kind, r.amount])).toEqual([
			['issued', 'corrected', '$60.00'],
			['void', 'original', '$100.00']
		]);
	});

	it('answers 404 for an address the Ledger does not know', async () => {
		const thrown = await Promise.resolve(
			supporterLoad(
				event('/staff/ledger/supporters/x', staff, { params: { email: 'nobody@example.test' } })
			)
		).then(
			() => null,
			(err: unknown) => err
		);
		expect(isHttpError(thrown) && thrown.status).toBe(404);
	});
});

describe('the gifts page and the landing page', () => {
	it('renders the first page with the filter options on the server', async () => {
		const data = await giftsPageView('/staff/ledger/gifts?interval=manual&sort=amount');
		expect(data.options.patients.map((p) => p.name)).toEqual(['Espuma', 'Salitre']);
		expect(data.options.levels.map((l) => l.name)).toEqual(
			expect.arrayContaining(['Ripple', 'Swell'])
		);
		expect(data.values.interval).toBe('manual');
		expect(data.query.sort).toBe('amount');
		expect(data.list.total).toBe(3);
		expect(data.problem).toBeNull();
	});

	it('shows a bad date as a message and lists without that filter', async () => {
		const data = await giftsPageView('/staff/ledger/gifts?from=2026-13-01&interval=manual');
		expect(data.problem?.errors).toEqual({ from: 'Enter dates as YYYY-MM-DD.' });
		expect(data.values.from).toBe('2026-13-01');
		expect(data.list.total).toBe(3);
	});

	it('lists adoptions and gifts net of refunds per patient', async () => {
		const data = (await ledgerLoad(event('/staff/ledger', staff))) as unknown as {
			patients: unknown[];
		};
		// Most adopted first. Salitre: $25 + ($100 − $40 refunded) = $85; Espuma: two monthly $15.
		expect(data.patients).toEqual([
			{ id: SALITRE, name: 'Salitre', activeAdoptions: 2, adoptions: 2, given: '$85.00' },
			{ id: ESPUMA, name: 'Espuma', activeAdoptions: 1, adoptions: 1, given: '$30.00' }
		]);
	});
});

describe('recording a gift by hand', () => {
	const tomorrow = () => {
		const d = new Date();
		d.setUTCDate(d.getUTCDate() + 1);
		return d.toISOString().slice(0, 10);
	};

	it('refuses bad input with a clear message and writes nothing', async () => {
		const good = {
			supporterEmail: maren.email,
			amount: '20',
			receivedOn: '2026-03-01',
			method: 'cash',
			reference: ''
		};
		const cases: [Record<string, string>, string, string][] = [
			[{ amount: '-5' }, 'amount', 'Enter an amount in dollars, like 25 or 25.50.'],
			[{ amount: 'ten dollars' }, 'amount', 'Enter an amount in dollars, like 25 or 25.50.'],
			[{ amount: '' }, 'amount', 'Enter the amount in dollars, like 50 or 50.00.'],
			[{ amount: '0' }, 'amount', 'Enter an amount above zero.'],
			[{ receivedOn: tomorrow() }, 'receivedOn', 'The date cannot be in the future.'],
			[
				{ receivedOn: '2026-02-30' },
				'receivedOn',
				'Enter the date the gift was received, as YYYY-MM-DD.'
			],
			[{ method: 'barter' }, 'method', 'Choose how the gift was paid.'],
			[
				{ supporterEmail: 'stranger@example.test' },
				'supporterEmail',
				'No supporter has this e-mail. Check the address, or ask them to create an account first.'
			]
		];
		for (const [change, field, message] of cases) {
			const before = await tableCounts();
			const result = await recordGift({ ...good, ...change });
			expect(isActionFailure(result)).toBe(true);
			if (!isActionFailure(result)) continue;
			expect(result.status).toBe(400);
			const data = result.data as unknown as {
				errors: Record<string, string>;
				values: Record<string, string>;
			};
			expect(data.errors).toEqual({ [field]: message });
			expect(data.values).toMatchObject({ ...good, ...change });
			expect(await tableCounts()).toEqual(before);
		}
	});

	it('records one manual gift with one receipt and one e-mail to the donor', async () => {
		const pilar = await person('Pilar Saltmarsh');
		const before = await tableCounts();
		await expectRedirectToManualList(
			recordGift({
				supporterEmail: ` ${pilar.email} `,
				amount: '$42.50',
				receivedOn: '2026-03-15',
				method: 'bank_transfer',
				reference: 'TR-88'
			})
		);
		expect(await tableCounts()).toEqual({
			gifts: before.gifts + 1,
			receipts: before.receipts + 1,
			outbox: before.outbox + 1
		});
		const [gift] = await db().select().from(gifts).where(eq(gifts.donorEmail, pilar.email));
		expect(gift).toMatchObject({
			source: 'manual',
			adoptionId: null,
			method: 'bank_transfer',
			reference: 'TR-88',
			donorName: 'Pilar Saltmarsh',
			status: 'paid',
			amountCents: 4250,
			recordedBy: staff.id
		});
		expect(gift.paidAt?.toISOString()).toBe('2026-03-15T12:00:00.000Z');
		const [receipt] = await db().select().from(receipts).where(eq(receipts.giftId, gift.id));
		// Nothing was given in return, so the whole $42.50 is deductible (IRS Publication 1771).
		expect(receipt).toMatchObject({ status: 'issued', amountCents: 4250, deductibleCents: 4250 });
		const mail = await db().select().from(outbox).where(eq(outbox.toAddress, pilar.email));
		expect(mail).toHaveLength(1);
		expect(mail[0].category).toBe('transactional');
		expect(mail[0].text).toContain('$42.50');
		// It shows in the list as a manual gift.
		const manual = await all(`interval=manual&q=${encodeURIComponent('saltmarsh')}`);
		expect(manual.rows.map((r) => [r.amountCents, r.method])).toEqual([[4250, 'bank_transfer']]);
	});
});

describe('exporting 100,000 gifts', () => {
	it('streams them in batches of at most 1,000 rows', async () => {
		const TOTAL = 100_000;
		const BATCH = 5_000;
		const start = Date.UTC(2024, 0, 1);
		for (let offset = 0; offset < TOTAL; offset += BATCH) {
			await db()
				.insert(gifts)
				.values(
					Array.from({ length: BATCH }, (_, i) => {
						const n = offset + i;
						return {
							id: `bulk-${String(n).padStart(6, '0')}`,
							source: 'manual' as const,
							method: 'cash' as const,
							donorName: `Bulk Donor ${n}`,
							donorEmail: `donor${n}@bulk-export.example.test`,
							status: 'paid' as const,
							amountCents: 100 + (n % 5000),
							currency: 'usd',
							paidAt: new Date(start + n * 60_000)
						};
					})
				);
		}

		const response = await giftsCsv(event('/api/ledger/gifts.csv?q=bulk-export.example', staff));
		expect(response.status).toBe(200);
		const reader = response.body!.getReader();
		const decoder = new TextDecoder();
		const heapBefore = process.memoryUsage().heapUsed;
		let heapPeak = heapBefore;
		let lines = 0;
		let chunks = 0;
		let largestChunk = 0;
		let last = '';
		for (;;) {
			const { done, value } = await reader.read();
			if (done) break;
			chunks++;
			const text = decoder.decode(value, { stream: true });
			const inChunk = text.split('\n').length - 1;
			lines += inChunk;
			largestChunk = Math.max(largestChunk, inChunk);
			last = text;
			heapPeak = Math.max(heapPeak, process.memoryUsage().heapUsed);
		}
		expect(lines).toBe(TOTAL + 1);
		// One chunk per batch from giftsInBatches (plus the header): none holds more than 1,000.
		expect(largestChunk).toBeLessThanOrEqual(1000);
		expect(chunks).toBeGreaterThanOrEqual(TOTAL / 1000 + 1);
		expect(last.trimEnd().split('\r\n').at(-1)).toMatch(/^bulk-099999,/);
		console.log(
			`CSV export of ${TOTAL} gifts: ${chunks} chunks; heap ${(heapBefore / 2 ** 20).toFixed(1)} MiB before, peak ${(heapPeak / 2 ** 20).toFixed(1)} MiB`
		);
	}, 600_000);
});
