// The transactional e-mails of an adoption's payments: the thank-you with its receipt for each
// paid gift, and the notice of a failed monthly payment. Queued in the transaction that records
// the payment, with a dedupe key per gift (or invoice), so a redelivered event sends nothing twice.
import { eq } from 'drizzle-orm';
import { appOrigin } from '../config';
import type { Executor } from '../db';
import { adoptionLevels, adoptions, gifts, patients } from '../db/schema';
import { receiptText, type Receipt } from '../ledger/gift-receipts';
import { formatReceiptNumber } from '../ledger/receipts';
import { enqueueMail } from '../mail/outbox';
import { organisationVars, renderEmail } from '../mail/templates';

export const formatMoney = (cents: number, currency: string) =>
	(cents / 100).toLocaleString('en-US', { style: 'currency', currency: currency.toUpperCase() });

async function giftContext(tx: Executor, giftId: string) {
	const [row] = await tx
		.select({
			amountCents: gifts.amountCents,
			currency: gifts.currency,
			invoiceId: gifts.invoiceId,
			failureMessage: gifts.failureMessage,
			name: adoptions.supporterName,
			email: adoptions.supporterEmail,
			interval: adoptions.interval,
			kind: adoptions.kind,
			recipientName: adoptions.recipientName,
			deliverOn: adoptions.deliverOn,
			patientName: patients.name,
			levelName: adoptionLevels.name,
			goods: adoptionLevels.goods
		})
		.from(gifts)
		.innerJoin(adoptions, eq(adoptions.id, gifts.adoptionId))
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.innerJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(eq(gifts.id, giftId));
	return row ?? null;
}

/** The thank-you with the receipt of one paid gift. */
export async function queueGiftThanks(tx: Executor, giftId: string, receipt: Receipt) {
	const gift = await giftContext(tx, giftId);
	if (!gift) return false;
	const intro = [
		gift.interval === 'month'
			? 'This month’s gift is in, and the next one follows in a month; you can change or end it at any time from your account.'
			: 'Thank you for standing with the patients in our care.',
		gift.kind === 'gift' && gift.recipientName
			? gift.deliverOn
				? `We will tell ${gift.recipientName} about your gift on ${gift.deliverOn}.`
				: `We have told ${gift.recipientName} about your gift.`
			: '',
		gift.goods ? `Your ${gift.goods} will be on its way soon.` : ''
	]
		.filter(Boolean)
		.join(' ');
	const mail = await renderEmail('gift-receipt', {
		...(await organisationVars(tx)),
		name: gift.name,
		email: gift.email,
		patientName: gift.patientName,
		levelName: gift.levelName,
		amount: formatMoney(receipt.amountCents, receipt.currency),
		giftDate: receipt.giftDate,
		intro,
		receiptNumber: formatReceiptNumber(receipt.number),
		receiptText: await receiptText(tx, receipt),
		accountLink: `${appOrigin()}/account`
	});
	return enqueueMail(tx, {
		dedupeKey: `gift-receipt:${receipt.id}`,
		category: 'transactional',
		to: gift.email,
		...mail
	});
}

/** Tells the supporter that a monthly payment failed, with the way to update the card. */
export async function queueMonthlyGiftFailed(tx: Executor, giftId: string) {
	const gift = await giftContext(tx, giftId);
	if (!gift) return false;
	const mail = await renderEmail('monthly-gift-failed', {
		...(await organisationVars(tx)),
		name: gift.name,
		patientName: gift.patientName,
		amount: formatMoney(gift.amountCents, gift.currency),
		reason: gift.failureMessage ?? 'The payment was declined.',
		link: `${appOrigin()}/account`
	});
	return enqueueMail(tx, {
		dedupeKey: `monthly-gift-failed:${gift.invoiceId ?? giftId}`,
		category: 'transactional',
		to: gift.email,
		...mail
	});
}

/** The receipt of a gift made outside the site (cheque, cash, transfer), e-mailed to its donor. */
export async function queueReceiptMail(tx: Executor, receipt: Receipt) {
	const mail = await renderEmail('receipt', {
		...(await organisationVars(tx)),
		name: receipt.donorName,
		email: receipt.donorEmail,
		amount: formatMoney(receipt.amountCents, receipt.currency),
		receiptNumber: formatReceiptNumber(receipt.number),
		receiptText: await receiptText(tx, receipt),
		accountLink: `${appOrigin()}/account`
	});
	return enqueueMail(tx, {
		dedupeKey: `receipt:${receipt.id}`,
		category: 'transactional',
		to: receipt.donorEmail,
		...mail
	});
}
