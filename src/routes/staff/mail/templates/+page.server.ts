import { error, fail } from '@sveltejs/kit';
import { randomUUID } from 'node:crypto';
import { z } from 'zod';
import { audit } from '$lib/server/audit';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { parseForm } from '$lib/server/forms';
import { demoVarsFor } from '$lib/server/mail/demo-vars';
import { enqueueMail } from '$lib/server/mail/outbox';
import {
	renderEmail,
	TEMPLATE_NAMES,
	TEMPLATE_VARIABLES,
	type TemplateName
} from '$lib/server/mail/templates';
import { kickOutbox } from '$lib/server/mail/worker';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const isTemplateName = (value: string): value is TemplateName =>
	(TEMPLATE_NAMES as string[]).includes(value);

const sendSchema = z.object({
	template: z.enum(TEMPLATE_NAMES as [TemplateName, ...TemplateName[]], {
		error: 'Choose one of the e-mail templates.'
	})
});

export const load: PageServerLoad = async (event) => {
	const user = requireRoles(event, ...STAFF_AREAS.mail.roles);
	const asked = event.url.searchParams.get('template');
	if (asked !== null && !isTemplateName(asked)) {
		error(404, 'There is no e-mail template with this name.');
	}
	const templates = await Promise.all(
		TEMPLATE_NAMES.map(async (name) => ({
			name,
			subject: (await renderEmail(name, await demoVarsFor(name))).subject
		}))
	);
	const selected =
		asked === null
			? null
			: {
					name: asked,
					variables: [...TEMPLATE_VARIABLES[asked]],
					...(await renderEmail(asked, await demoVarsFor(asked)))
				};
	return { me: user.email, templates, selected };
};

export const actions: Actions = {
	sendTest: async (event) => {
		const user = requireRoles(event, ...STAFF_AREAS.mail.roles);
		const parsed = parseForm(sendSchema, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		const name = parsed.data.template;
		const email = await renderEmail(name, await demoVarsFor(name));
		const database = db();
		await database.transaction(async (tx) => {
			await enqueueMail(tx, {
				dedupeKey: `template-test:${name}:${user.id}:${randomUUID()}`,
				category: 'transactional',
				to: user.email,
				...email
			});
			await audit(tx, user.id, 'mail.template_test_sent', user.email, { template: name });
		});
		kickOutbox();
		return { sentTo: user.email, template: name };
	}
};
