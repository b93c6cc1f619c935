// The Ledger dashboard against gifts and adoptions written straight into a throwaway database
// with known dates and amounts: month totals (refund, fee, dispute, months with nothing, UTC month
// edges), monthly supporters gained and lost, the failed-payments list, the reminder (one per
// payment per day, refused for anything not listed) and who may open the page and use its form.
import { isActionFailure, isHttpError } from '@sveltejs/kit';
import { and, count, eq, like } from 'drizzle-orm';
import { beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import type { Role } from '$lib/roles';
import {
	adoptionLevels,
	adoptions,
	auditLog,
	gifts,
	outbox,
	patients,
	users,
	type AdoptionStatus
} from '$lib/server/db/schema';
import {
	dashboard,
	failedMonthlyGifts,
	giftsByMonth,
	ReminderRefused,
	sendPaymentReminder
} from '$lib/server/ledger/dashboard';
import { giftQuery, listGifts } from '$lib/server/ledger/gifts';
import { actions, load } from '../../src/routes/staff/ledger/dashboard/+page.server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

const ORIGIN = 'http://127.0.0.1:5173';
const NOW = new Date('2026-03-15T10:00:00Z');
const LEVEL = crypto.randomUUID();
// Invented patients.
const BRISA = crypto.randomUUID();
const CORAL = crypto.randomUUID();
const DUNA = crypto.randomUUID();

// Adoptions, with the month each one counts in for the supporters chart (Dec 2025 – Mar 2026).
const M1 = 'dash-m1'; // monthly, active, started Jan
const M2 = 'dash-m2'; // monthly, cancelled: started Dec, ended Feb
const M3 = 'dash-m3'; // monthly, ended Mar (started before the range)
const M4 = 'dash-m4'; // monthly, active, started 1 Feb 00:00 UTC; latest gift failed
const M5 = 'dash-m5'; // monthly, active, started Jan; a failed gift, then a paid one
const M6 = 'dash-m6'; // monthly, cancelled in Mar; latest gift failed
const M7 = 'dash-m7'; // monthly, active, started before the range; paid
const O1 = 'dash-o1'; // one-time, started Jan, ended Feb: in neither supporters count

const M4_FAILURE = 'Your card has insufficient funds.';

let staff: SessionUser;
let supporter: SessionUser;
let educator: SessionUser;

async function person(name: string, roles: Role[]) {
	const id = crypto.randomUUID();
	const email = `${name.split(' ')[0].toLowerCase()}-${id.slice(0, 6)}@example.test`;
	await db().insert(users).values({ id, email, name, emailVerified: true });
	return { id, email, name, roles } satisfies SessionUser;
}

function adoption(
	id: string,
	patientId: string,
	interval: 'month' | 'once',
	status: AdoptionStatus,
	startedAt: string,
	endedAt: string | null = null
) {
	return {
		id,
		patientId,
		levelId: LEVEL,
		kind: 'self' as const,
		status,
		interval,
		amountCents: 2000,
		currency: 'usd',
		supporterEmail: `${id}@example.test`,
		supporterName: `Supporter ${id.slice(-2).toUpperCase()}`,
		startedAt: new Date(startedAt),
		endedAt: endedAt ? new Date(endedAt) : null
	};
}

type GiftInsert = typeof gifts.$inferInsert;
function gift(id: string, adoptionId: string, fields: Partial<GiftInsert>): GiftInsert {
	return { id, adoptionId, currency: 'usd', status: 'paid', amountCents: 0, ...fields };
}

function event(user: SessionUser | null, form?: Record<string, string>) {
	const url = new URL('/staff/ledger/dashboard', ORIGIN);
	let request = new Request(url);
	if (form) {
		const body = new FormData();
		for (const [key, value] of Object.entries(form)) body.append(key, value);
		request = new Request(new URL('/staff/ledger/dashboard?/remind', ORIGIN), {
			method: 'POST',
			body
		});
	}
	return {
		request,
		url,
		locals: { user, session: null, requestId: 'test' },
		params: {},
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

async function statusOf(result: Promise<unknown>) {
	const thrown = await result.then(
		() => null,
		(err: unknown) => err
	);
	return isHttpError(thrown) ? thrown.status : thrown;
}

async function written() {
	const [[o], [a]] = await Promise.all([
		db().select({ n: count() }).from(outbox),
		db().select({ n: count() }).from(auditLog)
	]);
	return { outbox: o.n, audit: a.n };
}

beforeAll(async () => {
	staff = await person('Ledger Staff', ['development']);
	supporter = await person('Plain Supporter', ['supporter']);
	educator = await person('Newsroom Educator', ['educator']);
	const patient = (id: string, slug: string, name: string) => ({
		id,
		slug,
		name,
		species: 'green' as const,
		lifeStage: 'juvenile' as const,
		admittedOn: '2025-05-01',
		admissionReason: 'cold_stunning' as const
	});
	await db()
		.insert(patients)
		.values([
			patient(BRISA, 'dash-brisa', 'Brisa'),
			patient(CORAL, 'dash-coral', 'Coralina'),
			patient(DUNA, 'dash-duna', 'Duna')
		]);
	await db()
		.insert(adoptionLevels)
		.values({ id: LEVEL, slug: 'dash-level', name: 'Swell', amountCents: 2000, interval: 'month' });
	await db()
		.insert(adoptions)
		.values([
			adoption(M1, BRISA, 'month', 'active', '2026-01-05T09:00:00Z'),
			adoption(M2, CORAL, 'month', 'cancelled', '2025-12-10T12:00:00Z', '2026-02-20T12:00:00Z'),
			adoption(M3, CORAL, 'month', 'ended', '2025-10-01T12:00:00Z', '2026-03-02T12:00:00Z'),
			adoption(M4, BRISA, 'month', 'active', '2026-02-01T00:00:00Z'),
			adoption(M5, BRISA, 'month', 'active', '2026-01-20T12:00:00Z'),
			adoption(M6, CORAL, 'month', 'cancelled', '2025-09-01T12:00:00Z', '2026-03-10T12:00:00Z'),
			adoption(M7, DUNA, 'month', 'active', '2025-06-01T12:00:00Z'),
			adoption(O1, BRISA, 'once', 'ended', '2026-01-07T12:00:00Z', '2026-02-01T12:00:00Z')
		]);
	// Fees follow the payment service's published US card price, 2.9% + 30¢:
	// 10000 → 320, 5000 → 175, 3000 → 117, 2000 → 88.
	await db()
		.insert(gifts)
		.values([
			gift('dash-nov', M3, {
				amountCents: 3000,
				feeCents: 117,
				paidAt: new Date('2025-11-30T23:59:59Z')
			}),
			gift('dash-jan-a', M1, {
				amountCents: 10000,
				feeCents: 320,
				paidAt: new Date('2026-01-05T09:00:00Z')
			}),
			gift('dash-jan-b', O1, {
				status: 'partially_refunded',
				amountCents: 5000,
				feeCents: 175,
				refundedCents: 2000,
				paidAt: new Date('2026-01-31T23:30:00Z')
			}),
			gift('dash-feb-disputed', M2, {
				status: 'disputed',
				amountCents: 3000,
				feeCents: 117,
				paidAt: new Date('2026-02-01T00:00:00Z')
			}),
			gift('dash-m4-paid', M4, {
				amountCents: 2000,
				feeCents: 88,
				paidAt: new Date('2026-02-01T12:00:00Z')
			}),
			gift('dash-m5-failed', M5, {
				status: 'failed',
				amountCents: 2000,
				failureMessage: 'Your card was declined.',
				createdAt: new Date('2026-02-20T06:00:00Z')
			}),
			gift('dash-m5-paid', M5, {
				amountCents: 2000,
				feeCents: 88,
				paidAt: new Date('2026-03-01T00:00:00Z')
			}),
			gift('dash-m4-failed', M4, {
				status: 'failed',
				amountCents: 2000,
				failureMessage: M4_FAILURE,
				createdAt: new Date('2026-03-01T08:00:00Z')
			}),
			gift('dash-m6-failed', M6, {
				status: 'failed',
				amountCents: 2000,
				failureMessage: 'Your card has expired.',
				createdAt: new Date('2026-03-05T08:00:00Z')
			}),
			gift('dash-m7-paid', M7, {
				amountCents: 2000,
				feeCents: 88,
				paidAt: new Date('2025-06-01T12:00:00Z')
			}),
			// After the range: the dashboard ends with the month of `now`.
			gift('dash-apr', M2, {
				amountCents: 10000,
				feeCents: 320,
				paidAt: new Date('2026-04-01T00:00:00Z')
			})
		]);
	// A cheque recorded by hand: no fee, no adoption.
	await db()
		.insert(gifts)
		.values({
			id: 'dash-feb-cheque',
			source: 'manual',
			method: 'cheque',
			donorName: 'Cheque Giver',
			donorEmail: 'cheque.giver@example.test',
			status: 'paid',
			amountCents: 4000,
			currency: 'usd',
			paidAt: new Date('2026-02-14T12:00:00Z')
		});
});

describe('gifts and net revenue by month', () => {
	it('sums each UTC calendar month, with the empty one, oldest first', async () => {
		const months = await giftsByMonth(4, NOW);
		// Hand-computed from the gifts above; net = gross − refunds − fees − disputed amounts.
		expect(months).toEqual([
			{ month: '2025-12', gifts: 0, grossCents: 0, netRevenueCents: 0 },
			// 10000 + 5000 = 15000; 15000 − 2000 refund − (320 + 175) fees = 12505
			{ month: '2026-01', gifts: 2, grossCents: 15000, netRevenueCents: 12505 },
			// 3000 disputed + 4000 cheque + 2000 = 9000; 9000 − (117 + 88) fees − 3000 disputed = 5795
			{ month: '2026-02', gifts: 3, grossCents: 9000, netRevenueCents: 5795 },
			// 2000 − 88 = 1912; failed renewals are not gifts
			{ month: '2026-03', gifts: 1, grossCents: 2000, netRevenueCents: 1912 }
		]);
	});

	it('agrees with the Ledger gift list on the gross of each month', async () => {
		// A second, independent sum: the gifts table's own totals for the same dates.
		const ranges = [
			['2026-01-01', '2026-01-31'],
			['2026-02-01', '2026-02-28'],
			['2026-03-01', '2026-03-31']
		];
		const months = await giftsByMonth(3, NOW);
		for (const [i, [from, to]] of ranges.entries()) {
			const listed = await listGifts(giftQuery.parse({ from, to, pageSize: '200' }));
			expect(months[i].grossCents).toBe(listed.totals.amountCents);
		}
	});

	it('gives twelve months by default, ending with the month of now', async () => {
		const { byMonth } = await dashboard(undefined, NOW);
		expect(byMonth.map((m) => m.month)).toEqual([
			'2025-04',
			'2025-05',
			'2025-06',
			'2025-07',
			'2025-08',
			'2025-09',
			'2025-10',
			'2025-11',
			'2025-12',
			'2026-01',
			'2026-02',
			'2026-03'
		]);
		expect(byMonth.find((m) => m.month === '2025-06')).toMatchObject({
			gifts: 1,
			grossCents: 2000,
			netRevenueCents: 1912
		});
		expect(byMonth.find((m) => m.month === '2025-11')?.gifts).toBe(1);
	});

	it('crosses a year end from January', async () => {
		const months = await giftsByMonth(2, new Date('2026-01-01T00:00:00Z'));
		expect(months.map((m) => m.month)).toEqual(['2025-12', '2026-01']);
	});
});

describe('monthly supporters gained and lost', () => {
	it('counts monthly adoptions started and ended in each month', async () => {
		const { supporters } = await dashboard(4, NOW);
		expect(supporters).toEqual([
			{ month: '2025-12', newMonthly: 1, lostMonthly: 0 }, // M2 started
			{ month: '2026-01', newMonthly: 2, lostMonthly: 0 }, // M1, M5 (O1 is one-time)
			{ month: '2026-02', newMonthly: 1, lostMonthly: 1 }, // M4 started; M2 cancelled
			{ month: '2026-03', newMonthly: 0, lostMonthly: 2 } // M3 ended, M6 cancelled
		]);
	});
});

describe('failed monthly gifts to follow up', () => {
	it('lists an active monthly adoption whose latest gift failed, and no other', async () => {
		const { failedToFollowUp } = await dashboard(4, NOW);
		expect(failedToFollowUp).toEqual([
			{
				adoptionId: M4,
				giftId: 'dash-m4-failed',
				supporterName: 'Supporter M4',
				supporterEmail: `${M4}@example.test`,
				patientId: BRISA,
				patientName: 'Brisa',
				amountCents: 2000,
				currency: 'usd',
				failureMessage: M4_FAILURE,
				failedOn: '2026-03-01',
				remindedToday: false
			}
		]);
		const ids = failedToFollowUp.map((f) => f.adoptionId);
		expect(ids).not.toContain(M5); // paid after it failed
		expect(ids).not.toContain(M6); // cancelled
	});

	it('ranks patients by active adoptions, with their gifts net of refunds', async () => {
		const { topPatients } = await dashboard(4, NOW);
		expect(topPatients).toEqual([
			// M1, M4, M5 active. 10000 + (5000 − 2000) + 2000 + 2000 = 17000 (failed ones left out)
			{ patientId: BRISA, patientName: 'Brisa', activeAdoptions: 3, giftCents: 17000 },
			{ patientId: DUNA, patientName: 'Duna', activeAdoptions: 1, giftCents: 2000 }
		]);
	});
});

describe('sendPaymentReminder', () => {
	it('queues one reminder to the supporter with the failure message, once a day', async () => {
		const before = await written();
		expect(await sendPaymentReminder(M4, staff.id, NOW)).toBe(true);
		const rows = await db()
			.select()
			.from(outbox)
			.where(like(outbox.dedupeKey, 'payment-reminder:%'));
		expect(rows).toHaveLength(1);
		expect(rows[0]).toMatchObject({
			dedupeKey: 'payment-reminder:dash-m4-failed:2026-03-15',
			toAddress: `${M4}@example.test`,
			category: 'transactional',
			status: 'pending'
		});
		expect(rows[0].text).toContain(M4_FAILURE);
		expect(rows[0].text).toContain('Brisa');
		expect(rows[0].text).toContain('$20.00');
		const audits = await db()
			.select()
			.from(auditLog)
			.where(
				and(eq(auditLog.action, 'gift.reminder_sent'), eq(auditLog.subject, 'dash-m4-failed'))
			);
		expect(audits).toHaveLength(1);
		expect(audits[0].actorId).toBe(staff.id);
		expect(await written()).toEqual({ outbox: before.outbox + 1, audit: before.audit + 1 });

		// A second click the same day (a little later) queues nothing.
		expect(await sendPaymentReminder(M4, staff.id, new Date('2026-03-15T22:00:00Z'))).toBe(false);
		expect(await written()).toEqual({ outbox: before.outbox + 1, audit: before.audit + 1 });
		const [listed] = (await dashboard(4, NOW)).failedToFollowUp;
		expect(listed.remindedToday).toBe(true);

		// The next day another one may go.
		const nextDay = new Date('2026-03-16T08:00:00Z');
		expect((await failedMonthlyGifts(nextDay))[0].remindedToday).toBe(false);
		expect(await sendPaymentReminder(M4, staff.id, nextDay)).toBe(true);
		expect(await written()).toEqual({ outbox: before.outbox + 2, audit: before.audit + 2 });
	});

	it('refuses an adoption that is not listed and writes nothing', async () => {
		const before = await written();
		for (const id of [M5, M6, M1, O1, 'no-such-adoption']) {
			await expect(sendPaymentReminder(id, staff.id, NOW)).rejects.toBeInstanceOf(ReminderRefused);
		}
		expect(await written()).toEqual(before);
	});
});

describe('the dashboard page', () => {
	it('is closed to supporters and educators', async () => {
		const before = await written();
		for (const user of [supporter, educator]) {
			expect(await statusOf(Promise.resolve(load(event(user))))).toBe(403);
			expect(await statusOf(Promise.resolve(actions.remind(event(user, { adoptionId: M4 }))))).toBe(
				403
			);
		}
		expect(await written()).toEqual(before);
	});

	it('shows development staff the figures', async () => {
		const data = (await load(event(staff))) as Awaited<ReturnType<typeof dashboard>> & {
			currency: string;
		};
		expect(data.currency).toBe('USD');
		expect(data.byMonth).toHaveLength(12);
		const order = data.byMonth.map((m) => m.month);
		expect(order).toEqual([...order].sort());
		expect(data.supporters.map((m) => m.month)).toEqual(order);
		expect(data.failedToFollowUp.map((f) => f.adoptionId)).toEqual([M4]);
		expect(data.topPatients[0].patientName).toBe('Brisa');
	});

	it('sends a reminder from the form, and refuses an adoption that is not listed', async () => {
		const before = await written();
		const sent = await actions.remind(event(staff, { adoptionId: M4 }));
		expect(isActionFailure(sent)).toBe(false);
		expect(sent).toMatchObject({
			adoptionId: M4,
			done: expect.stringContaining('Reminder queued')
		});
		expect(await written()).toEqual({ outbox: before.outbox + 1, audit: before.audit + 1 });

		const again = await actions.remind(event(staff, { adoptionId: M4 }));
		expect(again).toMatchObject({ done: expect.stringContaining('already went out today') });

		const refused = await actions.remind(event(staff, { adoptionId: M6 }));
		expect(isActionFailure(refused)).toBe(true);
		if (isActionFailure(refused)) {
			expect(refused.status).toBe(400);
			expect((refused.data as { message?: string } | undefined)?.message).toMatch(
				/not on the list/
			);
		}
		const empty = await actions.remind(event(staff, { adoptionId: ' ' }));
		expect(isActionFailure(empty) && empty.status).toBe(400);
		expect(await written()).toEqual({ outbox: before.outbox + 1, audit: before.audit + 1 });
	});
});
