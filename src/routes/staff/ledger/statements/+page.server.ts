import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { parseForm } from '$lib/server/forms';
import {
	checkStatementYear,
	queueYearEndStatements,
	statementRecipients,
	StatementRefused
} from '$lib/server/ledger/statements';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const lastYear = () => new Date().getUTCFullYear() - 1;

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const asked = Number(event.url.searchParams.get('year') ?? lastYear());
	const year = Number.isInteger(asked) ? asked : lastYear();
	let recipients = 0;
	let problem: string | null = null;
	try {
		checkStatementYear(year);
		recipients = (await statementRecipients(db(), year)).length;
	} catch (error) {
		if (!(error instanceof StatementRefused)) throw error;
		problem = error.message;
	}
	return { year, recipients, problem, thisYear: new Date().getUTCFullYear() };
};

const sendForm = z.object({
	year: z.coerce.number({ error: 'Choose a year.' }).int('Choose a year.')
});

export const actions: Actions = {
	send: async (event) => {
		const user = requireRoles(event, ...STAFF_AREAS.ledger.roles);
		const parsed = parseForm(sendForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { message: 'Choose a year.' });
		try {
			const { recipients, queued } = await queueYearEndStatements(parsed.data.year, user.id);
			return {
				done: `${queued} statement${queued === 1 ? '' : 's'} queued for ${parsed.data.year} (${recipients - queued} of ${recipients} supporters had theirs already).`
			};
		} catch (error) {
			if (error instanceof StatementRefused) return fail(400, { message: error.message });
			throw error;
		}
	}
};
