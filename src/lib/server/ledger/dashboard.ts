// The Ledger dashboard: gifts and net revenue per calendar month, monthly supporters gained and
// lost, active monthly adoptions whose latest payment failed (with a reminder staff can send),
// and the most adopted patients. Every figure is summed in the database, in integer cents.
import { and, asc, desc, eq, sql } from 'drizzle-orm';
import { appOrigin } from '../config';
import { audit } from '../audit';
import { formatMoney } from '../adoptions/mail';
import { db, type Executor } from '../db';
import { adoptions, gifts, outbox, patients } from '../db/schema';
import { enqueueMail } from '../mail/outbox';
import { organisationVars, renderEmail } from '../mail/templates';
import { kickOutbox } from '../mail/worker';

export interface MonthTotals {
	/** 'YYYY-MM', in UTC. */
	month: string;
	/** Gifts paid in the month (failed payments are not gifts). */
	gifts: number;
	grossCents: number;
	/** Gross − refunds − processor fees − what disputes took back. */
	netRevenueCents: number;
}

export interface MonthSupporters {
	month: string;
	/** Monthly adoptions that started in the month. */
	newMonthly: number;
	/** Monthly adoptions cancelled or ended in the month. */
	lostMonthly: number;
}

export interface FailedMonthly {
	adoptionId: string;
	giftId: string;
	supporterName: string;
	supporterEmail: string;
	patientId: string;
	patientName: string;
	amountCents: number;
	currency: string;
	failureMessage: string | null;
	/** 'YYYY-MM-DD' (UTC) the payment failed. */
	failedOn: string;
	/** A reminder for this payment was queued on the dashboard's day already. */
	remindedToday: boolean;
}

export interface TopPatient {
	patientId: string;
	patientName: string;
	activeAdoptions: number;
	/** Every gift for the patient's adoptions except failed ones, less refunds. */
	giftCents: number;
}

export interface Dashboard {
	byMonth: MonthTotals[];
	supporters: MonthSupporters[];
	failedToFollowUp: FailedMonthly[];
	topPatients: TopPatient[];
}

/** 'YYYY-MM-DD' of an instant, in UTC. */
export const utcDay = (at: Date) => at.toISOString().slice(0, 10);

/** The first instant of each of the last `months` calendar months (UTC) up to `now`'s month. */
function monthRange(months: number, now: Date) {
	if (!Number.isSafeInteger(months) || months < 1 || months > 120) {
		throw new RangeError(`Ask for 1 to 120 months, not ${months}.`);
	}
	const year = now.getUTCFullYear();
	const month = now.getUTCMonth();
	const iso = (d: number) => new Date(Date.UTC(year, month + d, 1)).toISOString();
	return {
		/** As UTC wall-clock timestamps, the way date_trunc of `… AT TIME ZONE 'UTC'` gives them. */
		first: iso(1 - months).slice(0, 10),
		last: iso(0).slice(0, 10),
		/** As instants, for the indexed range on the timestamptz columns. */
		from: iso(1 - months),
		until: iso(1)
	};
}

type Row = Record<string, unknown>;
const rowsOf = (result: unknown) => (result as { rows: Row[] }).rows;
// sum() and count() come back as bigint, which the drivers hand over as strings.
const int = (value: unknown) => Number(value ?? 0);

export async function giftsByMonth(
	months = 12,
	now = new Date(),
	executor: Executor = db()
): Promise<MonthTotals[]> {
	const range = monthRange(months, now);
	// A refund or a dispute counts in the month of the gift it takes back: the gifts table has no
	// date of its own for them. A disputed gift's remaining amount (after any refund) is lost.
	const result = await executor.execute(sql`
		WITH months AS (
			SELECT generate_series(${range.first}::timestamp, ${range.last}::timestamp, interval '1 month') AS month
		), totals AS (
			SELECT date_trunc('month', ${gifts.paidAt} AT TIME ZONE 'UTC') AS month,
				count(*) AS gifts,
				sum(${gifts.amountCents}) AS gross,
				sum(${gifts.amountCents} - ${gifts.refundedCents} - COALESCE(${gifts.feeCents}, 0)
					- CASE WHEN ${gifts.status} = 'disputed' THEN ${gifts.amountCents} - ${gifts.refundedCents} ELSE 0 END
				) AS net
			FROM ${gifts}
			WHERE ${gifts.status} <> 'failed'
				AND ${gifts.paidAt} >= ${range.from}::timestamptz
				AND ${gifts.paidAt} < ${range.until}::timestamptz
			GROUP BY 1
		)
		SELECT to_char(months.month, 'YYYY-MM') AS month, totals.gifts, totals.gross, totals.net
		FROM months LEFT JOIN totals ON totals.month = months.month
		ORDER BY months.month`);
	return rowsOf(result).map((r) => ({
		month: String(r.month),
		gifts: int(r.gifts),
		grossCents: int(r.gross),
		netRevenueCents: int(r.net)
	}));
}

export async function monthlySupportersByMonth(
	months = 12,
	now = new Date(),
	executor: Executor = db()
): Promise<MonthSupporters[]> {
	const range = monthRange(months, now);
	const result = await executor.execute(sql`
		WITH months AS (
			SELECT generate_series(${range.first}::timestamp, ${range.last}::timestamp, interval '1 month') AS month
		), started AS (
			SELECT date_trunc('month', ${adoptions.startedAt} AT TIME ZONE 'UTC') AS month, count(*) AS n
			FROM ${adoptions}
			WHERE ${adoptions.interval} = 'month'
				AND ${adoptions.startedAt} >= ${range.from}::timestamptz
				AND ${adoptions.startedAt} < ${range.until}::timestamptz
			GROUP BY 1
		), stopped AS (
			SELECT date_trunc('month', ${adoptions.endedAt} AT TIME ZONE 'UTC') AS month, count(*) AS n
			FROM ${adoptions}
			WHERE ${adoptions.interval} = 'month'
				AND ${adoptions.status} IN ('cancelled', 'ended')
				AND ${adoptions.endedAt} >= ${range.from}::timestamptz
				AND ${adoptions.endedAt} < ${range.until}::timestamptz
			GROUP BY 1
		)
		SELECT to_char(months.month, 'YYYY-MM') AS month, started.n AS started, stopped.n AS stopped
		FROM months
			LEFT JOIN started ON started.month = months.month
			LEFT JOIN stopped ON stopped.month = months.month
		ORDER BY months.month`);
	return rowsOf(result).map((r) => ({
		month: String(r.month),
		newMonthly: int(r.started),
		lostMonthly: int(r.stopped)
	}));
}

export const reminderKey = (giftId: string, day: string) => `payment-reminder:${giftId}:${day}`;

/**
 * Active monthly adoptions whose most recent gift failed, newest failure first. A failed renewal
 * has no payment date, so gifts are ordered by payment date or, failing that, when recorded.
 */
export async function failedMonthlyGifts(
	now = new Date(),
	executor: Executor = db(),
	adoptionId?: string
): Promise<FailedMonthly[]> {
	const at = sql`COALESCE(${gifts.paidAt}, ${gifts.createdAt})`;
	const latest = executor
		.selectDistinctOn([gifts.adoptionId], {
			adoptionId: sql<string>`${gifts.adoptionId}`.as('latest_adoption_id'),
			giftId: sql<string>`${gifts.id}`.as('latest_gift_id'),
			status: sql<string>`${gifts.status}`.as('latest_status'),
			amountCents: sql<number>`${gifts.amountCents}`.as('latest_amount_cents'),
			currency: sql<string>`${gifts.currency}`.as('latest_currency'),
			failureMessage: sql<string | null>`${gifts.failureMessage}`.as('latest_failure_message'),
			failedOn: sql<string>`to_char(${at} AT TIME ZONE 'UTC', 'YYYY-MM-DD')`.as('latest_on'),
			at: sql<Date>`${at}`.as('latest_at')
		})
		.from(gifts)
		.innerJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.where(
			and(
				eq(adoptions.interval, 'month'),
				eq(adoptions.status, 'active'),
				adoptionId ? eq(adoptions.id, adoptionId) : undefined
			)
		)
		.orderBy(gifts.adoptionId, desc(at), desc(gifts.id))
		.as('latest');
	const day = utcDay(now);
	return executor
		.select({
			adoptionId: adoptions.id,
			giftId: latest.giftId,
			supporterName: adoptions.supporterName,
			supporterEmail: adoptions.supporterEmail,
			patientId: patients.id,
			patientName: patients.name,
			amountCents: latest.amountCents,
			currency: latest.currency,
			failureMessage: latest.failureMessage,
			failedOn: latest.failedOn,
			remindedToday: sql<boolean>`EXISTS (SELECT 1 FROM ${outbox} WHERE ${outbox.dedupeKey} = 'payment-reminder:' || ${latest.giftId} || ':' || ${day})`
		})
		.from(latest)
		.innerJoin(adoptions, eq(adoptions.id, latest.adoptionId))
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.where(eq(latest.status, 'failed'))
		.orderBy(desc(latest.at), asc(adoptions.id));
}

/** The five patients with the most active adoptions (patients with none are left out). */
export async function topPatients(limit = 5, executor: Executor = db()): Promise<TopPatient[]> {
	const active = sql`count(DISTINCT ${adoptions.id}) FILTER (WHERE ${adoptions.status} = 'active')`;
	const given = sql`COALESCE(sum(${gifts.amountCents} - ${gifts.refundedCents}) FILTER (WHERE ${gifts.status} <> 'failed'), 0)`;
	const rows = await executor
		.select({
			patientId: patients.id,
			patientName: patients.name,
			activeAdoptions: sql<string>`${active}`,
			giftCents: sql<string>`${given}`
		})
		.from(patients)
		.innerJoin(adoptions, eq(adoptions.patientId, patients.id))
		.leftJoin(gifts, eq(gifts.adoptionId, adoptions.id))
		.groupBy(patients.id)
		.having(sql`${active} > 0`)
		.orderBy(desc(active), desc(given), asc(patients.name))
		.limit(limit);
	return rows.map((r) => ({
		patientId: r.patientId,
		patientName: r.patientName,
		activeAdoptions: int(r.activeAdoptions),
		giftCents: int(r.giftCents)
	}));
}

/** Everything the dashboard page shows, for the last `months` calendar months (UTC). */
export async function dashboard(months = 12, now = new Date()): Promise<Dashboard> {
	const [byMonth, supporters, failedToFollowUp, top] = await Promise.all([
		giftsByMonth(months, now),
		monthlySupportersByMonth(months, now),
		failedMonthlyGifts(now),
		topPatients(5)
	]);
	return { byMonth, supporters, failedToFollowUp, topPatients: top };
}

/** Asked to remind a supporter whose adoption is not on the failed-payments list. */
export class ReminderRefused extends Error {
	constructor(message: string) {
		super(message);
		this.name = 'ReminderRefused';
	}
}

/**
 * E-mails the supporter of a listed adoption the failed-payment notice again, at most once per
 * failed gift per day (UTC). Returns false when today's reminder for that gift went out already.
 * An adoption that is not listed (paid since, ended, one-time, unknown) is refused.
 */
export async function sendPaymentReminder(
	adoptionId: string,
	actorId: string,
	now = new Date()
): Promise<boolean> {
	const queued = await db().transaction(async (tx) => {
		// Locks the adoption so that a payment or cancellation arriving now waits for this check.
		await tx
			.select({ id: adoptions.id })
			.from(adoptions)
			.where(eq(adoptions.id, adoptionId))
			.for('update');
		const [failed] = await failedMonthlyGifts(now, tx, adoptionId);
		if (!failed) {
			throw new ReminderRefused(
				'Only an active monthly adoption whose latest payment failed can get a reminder. This one is not on the list: it may have been paid or ended since.'
			);
		}
		const day = utcDay(now);
		// Rendered here rather than with queueMonthlyGiftFailed, whose dedupe key is one per
		// failed invoice: a reminder needs its own key per day.
		const mail = await renderEmail('monthly-gift-failed', {
			...(await organisationVars(tx)),
			name: failed.supporterName,
			patientName: failed.patientName,
			amount: formatMoney(failed.amountCents, failed.currency),
			reason: failed.failureMessage ?? 'The payment was declined.',
			link: `${appOrigin()}/account`
		});
		const added = await enqueueMail(tx, {
			dedupeKey: reminderKey(failed.giftId, day),
			category: 'transactional',
			to: failed.supporterEmail,
			...mail
		});
		if (added) {
			await audit(tx, actorId, 'gift.reminder_sent', failed.giftId, {
				adoptionId,
				to: failed.supporterEmail,
				day
			});
		}
		return added;
	});
	if (queued) kickOutbox();
	return queued;
}
