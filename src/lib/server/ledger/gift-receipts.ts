// Receipts for gifts: issued in the transaction that records the payment, numbered from a gapless
// counter (a number is never reused, even when its receipt is voided), voided and reissued when a
// refund changes what was given. The wording comes from the country's rules module.
import { and, desc, eq, or, sql } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { db, type Executor } from '../db';
import {
	adoptionLevels,
	adoptions,
	counters,
	gifts,
	patients,
	receipts,
	users
} from '../db/schema';
import { getOrganisationSettings } from '../settings';
import { receiptRules, type ReceiptStatus } from './receipts';
import { renderReceiptPdf } from './receipts/pdf';

export type Receipt = typeof receipts.$inferSelect;

/** The next receipt number. The counter row is locked until the transaction ends: no gaps. */
export async function nextReceiptNumber(tx: Executor): Promise<number> {
	const [row] = await tx
		.insert(counters)
		.values({ name: 'receipt', value: 1 })
		.onConflictDoUpdate({ target: counters.name, set: { value: sql`${counters.value} + 1` } })
		.returning({ value: counters.value });
	return row.value;
}

const METHOD_WORDS: Record<string, string> = {
	cheque: 'by cheque',
	cash: 'in cash',
	bank_transfer: 'by bank transfer',
	other: ''
};

/** A gift with what its receipt needs: who gave, for what, and the level's goods. */
async function giftForReceipt(tx: Executor, giftId: string) {
	const [row] = await tx
		.select({
			id: gifts.id,
			source: gifts.source,
			method: gifts.method,
			reference: gifts.reference,
			status: gifts.status,
			amountCents: gifts.amountCents,
			refundedCents: gifts.refundedCents,
			currency: gifts.currency,
			fairMarketValueCents: gifts.fairMarketValueCents,
			paidAt: gifts.paidAt,
			// A manual gift names its donor; an online one is the adoption's payer.
			donorName: sql<string>`COALESCE(${gifts.donorName}, ${adoptions.supporterName})`,
			donorEmail: sql<string>`COALESCE(${gifts.donorEmail}, ${adoptions.supporterEmail})`,
			interval: adoptions.interval,
			kind: adoptions.kind,
			recipientName: adoptions.recipientName,
			patientName: patients.name,
			levelName: adoptionLevels.name,
			goods: adoptionLevels.goods,
			tokenItem: adoptionLevels.goodsTokenItem
		})
		.from(gifts)
		.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.leftJoin(patients, eq(patients.id, adoptions.patientId))
		.leftJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(eq(gifts.id, giftId));
	if (!row) return null;
	return { ...row, goods: row.goods ?? '', tokenItem: row.tokenItem ?? false };
}

type GiftForReceipt = NonNullable<Awaited<ReturnType<typeof giftForReceipt>>>;

function description(gift: GiftForReceipt): string {
	if (gift.source === 'manual' || !gift.levelName) {
		const how = METHOD_WORDS[gift.method ?? 'other'] ?? '';
		const ref = gift.reference ? ` (reference ${gift.reference})` : '';
		return `Gift${how ? ` ${how}` : ''}${ref}`;
	}
	const what = `${gift.levelName} adoption of ${gift.patientName}`;
	const how = gift.interval === 'month' ? ', monthly gift' : '';
	const forWhom =
		gift.kind === 'gift' && gift.recipientName ? `, given for ${gift.recipientName}` : '';
	return `${what}${how}${forWhom}`;
}

/** What is still given after refunds; the goods keep their value while any money remains. */
const receiptedCents = (gift: GiftForReceipt) =>
	gift.status === 'failed' ? 0 : Math.max(0, gift.amountCents - gift.refundedCents);

async function insertReceipt(
	tx: Executor,
	gift: GiftForReceipt,
	kind: 'original' | 'corrected',
	replacesId: string | null
): Promise<Receipt> {
	const amountCents = receiptedCents(gift);
	const paidAt = gift.paidAt ?? new Date();
	const terms = receiptRules('US').terms({
		amountCents,
		fairMarketValueCents: gift.fairMarketValueCents,
		goodsDescription: gift.goods,
		tokenItem: gift.tokenItem,
		paidAt: giftMoment(paidAt.toISOString().slice(0, 10)),
		currency: gift.currency
	});
	const [row] = await tx
		.insert(receipts)
		.values({
			id: randomUUID(),
			number: await nextReceiptNumber(tx),
			giftId: gift.id,
			kind,
			replacesId,
			country: 'US',
			donorName: gift.donorName,
			donorEmail: gift.donorEmail,
			description: description(gift),
			goodsDescription: gift.goods,
			goodsTokenItem: gift.tokenItem,
			amountCents,
			currency: gift.currency,
			fairMarketValueCents: gift.fairMarketValueCents,
			deductibleCents: terms.deductibleCents,
			giftDate: paidAt.toISOString().slice(0, 10)
		})
		.returning();
	return row;
}

/** The receipt in force for a gift (not voided), if any. */
export async function currentReceipt(tx: Executor, giftId: string): Promise<Receipt | null> {
	const [row] = await tx
		.select()
		.from(receipts)
		.where(and(eq(receipts.giftId, giftId), eq(receipts.status, 'issued')))
		.orderBy(desc(receipts.number))
		.limit(1);
	return row ?? null;
}

/**
 * Issues the receipt of a newly paid gift, or returns the one it already has. Returns null when
 * nothing was given (a failed payment, or refunded before the receipt was written).
 */
export async function issueGiftReceipt(tx: Executor, giftId: string): Promise<Receipt | null> {
	const existing = await currentReceipt(tx, giftId);
	if (existing) return existing;
	const gift = await giftForReceipt(tx, giftId);
	if (!gift || receiptedCents(gift) <= 0) return null;
	return insertReceipt(tx, gift, 'original', null);
}

/**
 * After a refund: voids the receipt in force when its amount no longer matches what was given,
 * and issues a corrected one naming it when money remains. Calling it again changes nothing.
 */
export async function reviseGiftReceipt(
	tx: Executor,
	giftId: string
): Promise<{ voided: Receipt | null; corrected: Receipt | null }> {
	const gift = await giftForReceipt(tx, giftId);
	const current = await currentReceipt(tx, giftId);
	if (!gift || !current || current.amountCents === receiptedCents(gift)) {
		return { voided: null, corrected: null };
	}
	const [voided] = await tx
		.update(receipts)
		.set({ status: 'void', voidedAt: new Date() })
		.where(and(eq(receipts.id, current.id), eq(receipts.status, 'issued')))
		.returning();
	const corrected =
		receiptedCents(gift) > 0 ? await insertReceipt(tx, gift, 'corrected', current.id) : null;
	return { voided, corrected };
}

/** The organisation as its receipts name it (the defaults until staff save the settings). */
export async function receiptOrganisation(tx: Executor) {
	const { legalName, displayName, taxId, postalAddress } = await getOrganisationSettings(tx);
	return { legalName, displayName, taxId, postalAddress };
}

/** The day of a gift as a moment (noon UTC), for the rules that take a time. */
const giftMoment = (day: string) => new Date(`${day}T12:00:00Z`);

/** What a stored receipt says: the country's terms and wording for its figures and status. */
export async function receiptWording(tx: Executor, receipt: Receipt) {
	const org = await receiptOrganisation(tx);
	const rules = receiptRules(receipt.country);
	const terms = rules.terms({
		amountCents: receipt.amountCents,
		fairMarketValueCents: receipt.fairMarketValueCents,
		goodsDescription: receipt.goodsDescription,
		tokenItem: receipt.goodsTokenItem,
		paidAt: giftMoment(receipt.giftDate),
		currency: receipt.currency
	});
	const replacesNumber = receipt.replacesId
		? (
				await tx
					.select({ number: receipts.number })
					.from(receipts)
					.where(eq(receipts.id, receipt.replacesId))
			)[0]?.number
		: undefined;
	// A receipt voided by a partial refund was replaced by a corrected one: it keeps its wording,
	// marked void; one voided by a full refund becomes the void notice.
	const [successor] =
		receipt.status === 'void'
			? await tx
					.select({ number: receipts.number })
					.from(receipts)
					.where(eq(receipts.replacesId, receipt.id))
			: [];
	const kindStatus: ReceiptStatus = receipt.kind === 'corrected' ? 'corrected' : 'issued';
	const status: ReceiptStatus = receipt.status === 'void' && !successor ? 'void' : kindStatus;
	const wording = rules.wording(terms, {
		organisation: org,
		donorName: receipt.donorName,
		number: receipt.number,
		status,
		replacesNumber,
		refundedAt: receipt.voidedAt ?? undefined,
		voidedBy: successor?.number
	});
	return { org, terms, wording, status, replacesNumber, successorNumber: successor?.number };
}

/** The receipt's wording as plain text (the e-mail that carries it). */
export async function receiptText(tx: Executor, receipt: Receipt): Promise<string> {
	const { wording } = await receiptWording(tx, receipt);
	return receiptRules(receipt.country).plainText(wording);
}

/** Receipts an account may see: its own adoptions' gifts, or its address once verified. */
export async function accountReceipts(userId: string) {
	const [user] = await db()
		.select({ email: users.email, verified: users.emailVerified })
		.from(users)
		.where(eq(users.id, userId));
	if (!user) return [];
	return db()
		.select({
			id: receipts.id,
			number: receipts.number,
			status: receipts.status,
			kind: receipts.kind,
			description: receipts.description,
			amountCents: receipts.amountCents,
			deductibleCents: receipts.deductibleCents,
			currency: receipts.currency,
			giftDate: receipts.giftDate
		})
		.from(receipts)
		.leftJoin(gifts, eq(gifts.id, receipts.giftId))
		.leftJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.where(
			or(
				eq(adoptions.supporterId, userId),
				...(user.verified ? [eq(receipts.donorEmail, user.email)] : [])
			)
		)
		.orderBy(desc(receipts.number));
}

/** One receipt, if the account may see it. */
export async function accountReceipt(userId: string, receiptId: string) {
	const mine = await accountReceipts(userId);
	if (!mine.some((r) => r.id === receiptId)) return null;
	const [row] = await db().select().from(receipts).where(eq(receipts.id, receiptId));
	return row ?? null;
}

/** A stored receipt as its PDF, worded by the country's rules. */
export async function receiptPdf(tx: Executor, receipt: Receipt): Promise<Uint8Array> {
	const { org, status, replacesNumber, successorNumber } = await receiptWording(tx, receipt);
	return renderReceiptPdf({
		number: receipt.number,
		issuedAt: receipt.issuedAt,
		status,
		replacesNumber,
		voidedBy: successorNumber,
		organisation: org,
		donor: { name: receipt.donorName, email: receipt.donorEmail },
		gift: {
			amountCents: receipt.amountCents,
			currency: receipt.currency,
			paidAt: giftMoment(receipt.giftDate),
			description: receipt.description,
			goodsDescription: receipt.goodsDescription,
			fairMarketValueCents: receipt.fairMarketValueCents,
			tokenItem: receipt.goodsTokenItem
		},
		countryCode: receipt.country,
		refundedAt: receipt.voidedAt ?? undefined
	});
}
