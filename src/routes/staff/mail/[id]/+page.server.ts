import { error } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { getCaughtMail } from '$lib/server/mail/mailbox';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const user = requireRoles(event, 'admin');
	const id = Number(event.params.id);
	const message = Number.isSafeInteger(id) && id > 0 ? await getCaughtMail(db(), id) : undefined;
	if (!message) error(404, 'No caught message with this number.');
	const me = user.email.toLowerCase();
	return {
		message,
		addressedToMe: message.envelopeTo.some((to) => to.toLowerCase() === me)
	};
};
