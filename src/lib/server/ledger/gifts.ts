// The Ledger's view of gifts: every payment, online or recorded by hand, with server-side
// filtering, sorting and paging; a supporter's history; totals per patient; manual gifts.
import { and, asc, count, desc, eq, gte, ilike, lt, or, sql, sum, type SQL } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { z } from 'zod';
import { audit } from '../audit';
import { MAX_AMOUNT_CENTS, amount } from '../adoptions/form';
import { db, type Executor } from '../db';
import {
	adoptionLevels,
	adoptions,
	gifts,
	GIFT_STATUSES,
	MANUAL_GIFT_METHODS,
	patients,
	receipts,
	users
} from '../db/schema';
import { email as emailField } from '../forms';
import { queueReceiptMail } from '../adoptions/mail';
import { kickOutbox } from '../mail/worker';
import { issueGiftReceipt } from './gift-receipts';

export const LEDGER_SORTS = ['date', 'amount', 'supporter', 'status', 'patient'] as const;
export const LEDGER_PAGE_SIZE = 25;

const optionalText = z
	.string()
	.trim()
	.optional()
	.transform((v) => (v ? v : undefined));
const optionalDay = z
	.string()
	.trim()
	.optional()
	.transform((v) => (v ? v : undefined))
	.pipe(z.iso.date({ error: 'Enter dates as YYYY-MM-DD.' }).optional());

/** The gifts table's query string: every field optional, each checked. */
export const giftQuery = z.object({
	from: optionalDay,
	to: optionalDay,
	patient: optionalText,
	level: optionalText,
	interval: z.enum(['once', 'month', 'manual']).optional().catch(undefined),
	status: z.enum(GIFT_STATUSES).optional().catch(undefined),
	q: z.string().trim().max(100, 'Search for at most 100 characters.').optional(),
	sort: z.enum(LEDGER_SORTS).default('date').catch('date'),
	dir: z.enum(['asc', 'desc']).default('desc').catch('desc'),
	page: z.coerce.number().int().min(1).max(100_000).default(1).catch(1),
	pageSize: z.coerce
		.number()
		.int()
		.min(1)
		.max(200)
		.default(LEDGER_PAGE_SIZE)
		.catch(LEDGER_PAGE_SIZE)
});
export type GiftQuery = z.infer<typeof giftQuery>;

/** Reads the query string; unknown values fall back to the defaults, bad dates are refused. */
export function parseGiftQuery(params: URLSearchParams) {
	return giftQuery.safeParse(Object.fromEntries(params));
}

const donorName = sql<string>`COALESCE(${gifts.donorName}, ${adoptions.supporterName})`;
const donorEmail = sql<string>`COALESCE(${gifts.donorEmail}, ${adoptions.supporterEmail})`;
const giftDay = sql<string>`to_char(${gifts.paidAt} AT TIME ZONE 'UTC', 'YYYY-MM-DD')`;

function conditions(query: Partial<GiftQuery>): SQL | undefined {
	const parts: (SQL | undefined)[] = [];
	if (query.from) parts.push(gte(gifts.paidAt, new Date(`${query.from}T00:00:00Z`)));
	if (query.to) {
		const end = new Date(`${query.to}T00:00:00Z`);
		end.setUTCDate(end.getUTCDate() + 1);
		parts.push(lt(gifts.paidAt, end));
	}
	if (query.patient) parts.push(eq(adoptions.patientId, query.patient));
	if (query.level) parts.push(eq(adoptions.levelId, query.level));
	if (query.interval === 'manual') parts.push(eq(gifts.source, 'manual'));
	else if (query.interval) parts.push(eq(adoptions.interval, query.interval));
	if (query.status) parts.push(eq(gifts.status, query.status));
	if (query.q) {
		const like = `%${query.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
		parts.push(or(ilike(donorName, like), ilike(donorEmail, like)));
	}
	return and(...parts);
}

const SORT_COLUMNS = {
	date: gifts.paidAt,
	amount: gifts.amountCents,
	supporter: donorName,
	status: gifts.status,
	patient: patients.name
} as const;

const giftColumns = {
	id: gifts.id,
	paidOn: giftDay,
	source: gifts.source,
	status: gifts.status,
	amountCents: gifts.amountCents,
	feeCents: gifts.feeCents,
	netCents: gifts.netCents,
	refundedCents: gifts.refundedCents,
	currency: gifts.currency,
	fairMarketValueCents: gifts.fairMarketValueCents,
	donorName,
	donorEmail,
	method: gifts.method,
	reference: gifts.reference,
	interval: adoptions.interval,
	kind: adoptions.kind,
	patientId: patients.id,
	patientName: patients.name,
	levelName: adoptionLevels.name,
	chargeId: gifts.chargeId,
	invoiceId: gifts.invoiceId,
	payoutId: gifts.payoutId,
	failureMessage: gifts.failureMessage
};

/** One page of gifts, with how many match and their totals. */
export async function listGifts(query: GiftQuery, executor: Executor = db()) {
	const where = conditions(query);
	const order = query.dir === 'asc' ? asc : desc;
	const rows = await executor
		.select(giftColumns)
		.from(gifts)
		.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.leftJoin(patients, eq(patients.id, adoptions.patientId))
		.leftJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(where)
		.orderBy(order(SORT_COLUMNS[query.sort]), order(gifts.id))
		.limit(query.pageSize)
		.offset((query.page - 1) * query.pageSize);
	const [totals] = await executor
		.select({
			total: count(),
			// Failed payments brought no money: they are listed, not added up.
			amountCents: sql<string>`sum(${gifts.amountCents}) FILTER (WHERE ${gifts.status} <> 'failed')`,
			refundedCents: sum(gifts.refundedCents),
			netCents: sum(gifts.netCents)
		})
		.from(gifts)
		.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.leftJoin(patients, eq(patients.id, adoptions.patientId))
		.leftJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(where);
	return {
		rows,
		total: Number(totals.total),
		page: query.page,
		pageSize: query.pageSize,
		pageCount: Math.max(1, Math.ceil(Number(totals.total) / query.pageSize)),
		totals: {
			amountCents: Number(totals.amountCents ?? 0),
			refundedCents: Number(totals.refundedCents ?? 0),
			netCents: Number(totals.netCents ?? 0)
		}
	};
}

/**
 * Every gift matching the filters, oldest first, in batches (keyset paging on paid date and id),
 * so an export of any size never holds more than one batch in memory.
 */
export async function* giftsInBatches(
	query: Partial<GiftQuery>,
	batchSize = 1000,
	executor: Executor = db()
) {
	// A failed renewal has no payment date: it sorts by when it was recorded.
	const at = sql<Date>`COALESCE(${gifts.paidAt}, ${gifts.createdAt})`;
	let after: { at: string; id: string } | null = null;
	for (;;) {
		const cursor: SQL | undefined = after
			? sql`(${at}, ${gifts.id}) > (${after.at}::timestamptz, ${after.id})`
			: undefined;
		const page = await executor
			.select({ ...giftColumns, sortAt: sql<string>`${at}::text` })
			.from(gifts)
			.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
			.leftJoin(patients, eq(patients.id, adoptions.patientId))
			.leftJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
			.where(and(conditions(query), cursor))
			.orderBy(asc(at), asc(gifts.id))
			.limit(batchSize);
		if (page.length === 0) return;
		yield page;
		if (page.length < batchSize) return;
		const last: { sortAt: string; id: string } = page[page.length - 1];
		after = { at: last.sortAt, id: last.id };
	}
}

/** Adoptions and gift totals per patient, most adopted first. */
export async function patientTotals(executor: Executor = db()) {
	return executor
		.select({
			patientId: patients.id,
			patientName: patients.name,
			activeAdoptions: sql<number>`count(DISTINCT ${adoptions.id}) FILTER (WHERE ${adoptions.status} = 'active')::int`,
			adoptions: sql<number>`count(DISTINCT ${adoptions.id})::int`,
			giftCents: sql<number>`COALESCE(sum(${gifts.amountCents} - ${gifts.refundedCents}) FILTER (WHERE ${gifts.status} <> 'failed'), 0)::int`
		})
		.from(patients)
		.innerJoin(adoptions, eq(adoptions.patientId, patients.id))
		.leftJoin(gifts, eq(gifts.adoptionId, adoptions.id))
		.groupBy(patients.id)
		.orderBy(desc(sql`count(DISTINCT ${adoptions.id})`), asc(patients.name));
}

/** Everything the Ledger knows about one supporter address. */
export async function supporterHistory(address: string, executor: Executor = db()) {
	const email = address.trim().toLowerCase();
	const gifted = await executor
		.select(giftColumns)
		.from(gifts)
		.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.leftJoin(patients, eq(patients.id, adoptions.patientId))
		.leftJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(sql`lower(${donorEmail}) = ${email}`)
		.orderBy(desc(gifts.paidAt));
	const adopted = await executor
		.select({
			id: adoptions.id,
			status: adoptions.status,
			kind: adoptions.kind,
			interval: adoptions.interval,
			amountCents: adoptions.amountCents,
			startedAt: adoptions.startedAt,
			endedAt: adoptions.endedAt,
			patientName: patients.name,
			levelName: adoptionLevels.name,
			recipientName: adoptions.recipientName
		})
		.from(adoptions)
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.innerJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(sql`lower(${adoptions.supporterEmail}) = ${email}`)
		.orderBy(desc(adoptions.createdAt));
	const receipted = await executor
		.select({
			id: receipts.id,
			number: receipts.number,
			status: receipts.status,
			kind: receipts.kind,
			amountCents: receipts.amountCents,
			deductibleCents: receipts.deductibleCents,
			giftDate: receipts.giftDate
		})
		.from(receipts)
		.where(sql`lower(${receipts.donorEmail}) = ${email}`)
		.orderBy(desc(receipts.number));
	const [account] = await executor
		.select({ id: users.id, name: users.name })
		.from(users)
		.where(sql`lower(${users.email}) = ${email}`);
	return {
		email,
		account: account ?? null,
		gifts: gifted,
		adoptions: adopted,
		receipts: receipted
	};
}

/** A supporter the Ledger knows: an account, or someone who has adopted. */
export async function knownSupporter(address: string, executor: Executor = db()) {
	const email = address.trim().toLowerCase();
	const [account] = await executor
		.select({ name: users.name, email: users.email })
		.from(users)
		.where(sql`lower(${users.email}) = ${email}`);
	if (account) return { name: account.name, email };
	const [adopter] = await executor
		.select({ name: adoptions.supporterName })
		.from(adoptions)
		.where(sql`lower(${adoptions.supporterEmail}) = ${email}`)
		.orderBy(desc(adoptions.createdAt))
		.limit(1);
	return adopter ? { name: adopter.name, email } : null;
}

export const manualGiftForm = z.object({
	supporterEmail: emailField,
	amount: amount.pipe(
		z
			.number({ error: 'Enter the amount in dollars, like 50 or 50.00.' })
			.int()
			.min(1, 'Enter an amount above zero.')
			.max(MAX_AMOUNT_CENTS, `Enter at most $${(MAX_AMOUNT_CENTS / 100).toLocaleString('en-US')}.`)
	),
	receivedOn: z.iso.date({ error: 'Enter the date the gift was received, as YYYY-MM-DD.' }),
	method: z.enum(MANUAL_GIFT_METHODS, { error: 'Choose how the gift was paid.' }),
	reference: z.string().trim().max(100, 'Keep the reference under 100 characters.').optional()
});
export type ManualGiftInput = z.infer<typeof manualGiftForm>;

export class ManualGiftRefused extends Error {
	constructor(
		readonly field: string,
		message: string
	) {
		super(message);
	}
}

/**
 * Records a cheque, cash or transfer gift: a paid gift with its receipt, in one transaction.
 * A date in the future or an unknown supporter is refused and nothing is written.
 */
export async function recordManualGift(input: ManualGiftInput, actorId: string, now = new Date()) {
	if (input.receivedOn > now.toISOString().slice(0, 10)) {
		throw new ManualGiftRefused('receivedOn', 'The date cannot be in the future.');
	}
	const supporter = await knownSupporter(input.supporterEmail);
	if (!supporter) {
		throw new ManualGiftRefused(
			'supporterEmail',
			'No supporter has this e-mail. Check the address, or ask them to create an account first.'
		);
	}
	const result = await db().transaction(async (tx) => {
		const id = randomUUID();
		await tx.insert(gifts).values({
			id,
			source: 'manual',
			method: input.method,
			reference: input.reference || null,
			donorName: supporter.name,
			donorEmail: supporter.email,
			recordedBy: actorId,
			status: 'paid',
			amountCents: input.amount,
			currency: 'usd',
			fairMarketValueCents: 0,
			paidAt: new Date(`${input.receivedOn}T12:00:00Z`)
		});
		const receipt = await issueGiftReceipt(tx, id);
		if (receipt) await queueReceiptMail(tx, receipt);
		await audit(tx, actorId, 'gift.recorded', id, {
			amountCents: input.amount,
			method: input.method,
			receipt: receipt?.number ?? null
		});
		return { giftId: id, receipt };
	});
	kickOutbox();
	return result;
}
