import { error } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { accountReceipt, receiptPdf } from '$lib/server/ledger/gift-receipts';
import type { RequestHandler } from './$types';

/** One of the signed-in account's receipts as a PDF download. */
export const GET: RequestHandler = async (event) => {
	const user = requireRoles(event);
	// Someone else's receipt answers exactly like a missing one.
	const receipt = await accountReceipt(user.id, event.params.id);
	if (!receipt) error(404, 'There is no such receipt in your account.');
	const pdf = await receiptPdf(db(), receipt);
	return new Response(new Uint8Array(pdf), {
		headers: {
			'content-type': 'application/pdf',
			'content-length': String(pdf.length),
			'content-disposition': `attachment; filename="receipt-${receipt.number}.pdf"`,
			'cache-control': 'private, no-store',
			'x-content-type-options': 'nosniff'
		}
	});
};
