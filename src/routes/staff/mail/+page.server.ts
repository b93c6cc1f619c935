import { randomUUID } from 'node:crypto';
import { audit } from '$lib/server/audit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { formatUtc, listCaughtMail, pageFromQuery } from '$lib/server/mail/mailbox';
import { enqueueMail } from '$lib/server/mail/outbox';
import { mailMode } from '$lib/server/mail/service';
import { organisationVars, renderEmail } from '$lib/server/mail/templates';
import { kickOutbox } from '$lib/server/mail/worker';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRoles(event, 'admin');
	const page = pageFromQuery(event.url.searchParams.get('page'));
	return {
		me: user.email,
		mode: (await mailMode()) ?? null,
		page,
		...(await listCaughtMail(db(), page))
	};
};

export const actions: Actions = {
	sendTest: async (event) => {
		const user = requireRoles(event, 'admin');
		const database = db();
		const email = await renderEmail('test-message', {
			...(await organisationVars(database)),
			name: user.name,
			sentAt: formatUtc(new Date())
		});
		await database.transaction(async (tx) => {
			await enqueueMail(tx, {
				dedupeKey: `test-message:${user.id}:${randomUUID()}`,
				category: 'transactional',
				to: user.email,
				...email
			});
			await audit(tx, user.id, 'mail.test_sent', user.email);
		});
		kickOutbox();
		return { sentTo: user.email };
	}
};
