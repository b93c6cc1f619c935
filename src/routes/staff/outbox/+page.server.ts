import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import { audit } from '$lib/server/audit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { parseForm } from '$lib/server/forms';
import { pageFromQuery } from '$lib/server/mail/mailbox';
import {
	isOutboxStatus,
	listOutbox,
	outboxCounts,
	recentEventsWithCounts,
	retryAllFailed,
	retryFailedMessage
} from '$lib/server/mail/outbox-admin';
import { kickOutbox } from '$lib/server/mail/worker';
import { updatesBlocked } from '$lib/server/updates/fanout';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.outbox.roles;

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const wanted = event.url.searchParams.get('status');
	const status = isOutboxStatus(wanted) ? wanted : null;
	const page = pageFromQuery(event.url.searchParams.get('page'));
	const database = db();
	const [counts, blocked, events, list] = await Promise.all([
		outboxCounts(database),
		updatesBlocked(database),
		recentEventsWithCounts(database),
		listOutbox(database, { status, page })
	]);
	return { counts, blocked, events, status, page, ...list };
};

const retryForm = z.object({
	id: z.coerce
		.number({ error: 'Choose a message to retry.' })
		.int('Choose a message to retry.')
		.positive('Choose a message to retry.')
		.max(2_147_483_647, 'Choose a message to retry.')
});

export const actions: Actions = {
	retry: async (event) => {
		const user = requireRoles(event, ...area);
		const parsed = parseForm(retryForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		const id = parsed.data.id;
		const outcome = await db().transaction(async (tx) => {
			const result = await retryFailedMessage(tx, id);
			if (result.retried) await audit(tx, user.id, 'mail.retried', String(id));
			return result;
		});
		if (!outcome.retried) {
			const message =
				outcome.reason === 'not-found'
					? `There is no message ${id}.`
					: `Message ${id} is ${outcome.status === 'pending' ? 'still queued' : 'already sent'}; only failed messages can be retried.`;
			return fail(outcome.reason === 'not-found' ? 404 : 409, {
				errors: { id: message },
				values: parsed.values
			});
		}
		kickOutbox();
		return { done: `Message ${id} is queued again.` };
	},
	retryAll: async (event) => {
		const user = requireRoles(event, ...area);
		const retried = await db().transaction(async (tx) => {
			const n = await retryAllFailed(tx);
			if (n > 0) await audit(tx, user.id, 'mail.retried_all', null, { count: n });
			return n;
		});
		if (retried === 0) return { done: 'There were no failed messages to retry.' };
		kickOutbox();
		return {
			done: `${retried.toLocaleString('en-US')} failed ${retried === 1 ? 'message is' : 'messages are'} queued again.`
		};
	}
};
