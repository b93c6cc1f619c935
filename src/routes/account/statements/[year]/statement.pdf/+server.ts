import { error } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { accountStatement, statementPdf } from '$lib/server/ledger/statements';
import type { RequestHandler } from './$types';

/** The signed-in supporter's year-end statement (their verified address's receipts) as a PDF. */
export const GET: RequestHandler = async (event) => {
	const user = requireRoles(event);
	const year = Number(event.params.year);
	const statement = await accountStatement(user.id, year);
	if (!statement) error(404, 'There is no statement for that year in your account.');
	const pdf = await statementPdf(statement);
	return new Response(new Uint8Array(pdf), {
		headers: {
			'content-type': 'application/pdf',
			'content-length': String(pdf.length),
			'content-disposition': `attachment; filename="statement-${year}.pdf"`,
			'cache-control': 'private, no-store',
			'x-content-type-options': 'nosniff'
		}
	});
};
