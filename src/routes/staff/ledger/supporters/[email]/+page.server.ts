import { error } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { supporterHistory } from '$lib/server/ledger/gifts';
import { formatCents, formatReceiptNumber } from '$lib/server/ledger/receipts/us';
import { getOrganisationSettings } from '$lib/server/settings';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

const day = (date: Date | null) => (date ? date.toISOString().slice(0, 10) : null);

/** One supporter address: its gifts, adoptions and receipts. The address arrives decoded. */
export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const [history, settings] = await Promise.all([
		supporterHistory(event.params.email),
		getOrganisationSettings()
	]);
	const { account, gifts, adoptions, receipts } = history;
	if (!account && gifts.length === 0 && adoptions.length === 0 && receipts.length === 0) {
		error(404, 'The Ledger knows no supporter with this e-mail address.');
	}
	const currency = settings.currency.toUpperCase();
	const money = (cents: number | null, code = currency) =>
		cents === null ? null : formatCents(cents, code.toUpperCase());
	// What stayed with the organisation: paid gifts less their refunds (failed payments never came).
	const givenCents = gifts
		.filter((g) => g.status !== 'failed')
		.reduce((total, g) => total + g.amountCents - g.refundedCents, 0);
	return {
		email: history.email,
		name: account?.name ?? gifts.find((g) => g.donorName)?.donorName ?? null,
		hasAccount: account !== null,
		given: money(givenCents),
		gifts: gifts.map((g) => ({
			id: g.id,
			paidOn: g.paidOn,
			source: g.source,
			status: g.status,
			amount: money(g.amountCents, g.currency),
			refunded: g.refundedCents > 0 ? money(g.refundedCents, g.currency) : null,
			method: g.method,
			reference: g.reference,
			interval: g.interval,
			patientName: g.patientName,
			levelName: g.levelName,
			failureMessage: g.failureMessage
		})),
		adoptions: adoptions.map((a) => ({
			id: a.id,
			status: a.status,
			kind: a.kind,
			interval: a.interval,
			amount: money(a.amountCents),
			startedOn: day(a.startedAt),
			endedOn: day(a.endedAt),
			patientName: a.patientName,
			levelName: a.levelName,
			recipientName: a.recipientName
		})),
		receipts: receipts.map((r) => ({
			id: r.id,
			number: formatReceiptNumber(r.number),
			status: r.status,
			kind: r.kind,
			amount: money(r.amountCents),
			deductible: money(r.deductibleCents),
			giftDate: r.giftDate
		}))
	};
};
