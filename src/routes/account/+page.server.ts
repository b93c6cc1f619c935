import { fail, redirect } from '@sveltejs/kit';
import { z } from 'zod';
import { accountAdoptions, adoptionCustomer } from '$lib/server/adoptions/account';
import { activeLevels } from '$lib/server/adoptions/checkout';
import { amount } from '$lib/server/adoptions/form';
import { ChangeRefused, changeMonthlyGift } from '$lib/server/adoptions/subscriptions';
import { db } from '$lib/server/db';
import { accountReceipts } from '$lib/server/ledger/gift-receipts';
import { accountStatementYears } from '$lib/server/ledger/statements';
import {
	CATEGORY_LABELS,
	getPreferences,
	preferencesForm,
	savePreferences,
	UPDATE_CATEGORIES
} from '$lib/server/mail/preferences';
import { appOrigin } from '$lib/server/config';
import { stripe } from '$lib/server/payments/client';
import { changePassword } from '$lib/server/auth/accounts';
import { requireRoles } from '$lib/server/auth/roles';
import { newPassword, parseForm, fieldError } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';
import { log } from '$lib/server/log';

const passwordForm = z
	.object({
		current: z.string().min(1, 'Enter your current password.'),
		password: newPassword,
		confirm: z.string()
	})
	.refine((v) => v.password === v.confirm, {
		path: ['confirm'],
		message: 'The two passwords differ.'
	});

export const load: PageServerLoad = async (event) => {
	const user = requireRoles(event);
	const [adoptions, receipts, preferences, levels, statementYears] = await Promise.all([
		accountAdoptions(user.id),
		accountReceipts(user.id),
		getPreferences(db(), user.email),
		activeLevels(),
		accountStatementYears(user.id)
	]);
	return {
		account: { name: user.name, email: user.email, roles: user.roles },
		// The supporter's own adoptions; the payer's e-mail stays on the server.
		adoptions: adoptions.map(({ supporterEmail: _payer, ...rest }) => rest),
		receipts,
		statementYears,
		preferences,
		categories: UPDATE_CATEGORIES.map((c) => ({ name: c, ...CATEGORY_LABELS[c] })),
		monthlyLevels: levels
			.filter((l) => l.interval === 'month')
			.map((l) => ({ id: l.id, name: l.name, amountCents: l.amountCents, goods: l.goods }))
	};
};

const billingForm = z.object({ adoptionId: z.string().min(1, 'Choose an adoption.') });

const changeForm = z.object({
	adoptionId: z.string().min(1, 'Choose an adoption.'),
	levelId: z.string().min(1, 'Choose a monthly level.'),
	amount
});

export const actions: Actions = {
	/** Opens the processor's billing page to change the card or cancel a monthly adoption. */
	billing: async (event) => {
		const user = requireRoles(event);
		const parsed = parseForm(billingForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors });
		const adoption = (await accountAdoptions(user.id)).find(
			(a) => a.id === parsed.data.adoptionId && !a.receivedAsGift
		);
		if (!adoption || adoption.interval !== 'month' || adoption.status !== 'active') {
			return fail(400, {
				errors: fieldError('billing', 'That monthly adoption is not yours to change.')
			});
		}
		const customer = await adoptionCustomer(adoption.id);
		if (!customer) {
			return fail(409, {
				errors: fieldError('billing', 'The payment service has not confirmed this adoption yet.')
			});
		}
		let url: string;
		try {
			({ url } = await stripe().billingPortal.sessions.create({
				customer,
				return_url: `${appOrigin()}/account`
			}));
		} catch (problem) {
			log().error({ err: problem }, 'opening the billing page failed');
			return fail(503, {
				errors: fieldError('billing', 'The payment service could not be reached; try again soon.')
			});
		}
		redirect(303, url);
	},
	/** Changes a monthly adoption's level or amount from the next month on. */
	change: async (event) => {
		const user = requireRoles(event);
		const parsed = parseForm(changeForm, await event.request.formData());
		if (!parsed.ok) {
			return fail(400, {
				errors: parsed.errors,
				values: parsed.values,
				changing: parsed.values.adoptionId
			});
		}
		try {
			await changeMonthlyGift({
				adoptionId: parsed.data.adoptionId,
				userId: user.id,
				levelId: parsed.data.levelId,
				amountCents: parsed.data.amount
			});
		} catch (problem) {
			if (problem instanceof ChangeRefused) {
				return fail(400, {
					errors: fieldError(problem.field, problem.message),
					values: parsed.values,
					changing: parsed.data.adoptionId
				});
			}
			log().error({ err: problem }, 'changing a monthly adoption failed');
			return fail(503, {
				errors: fieldError('change', 'The payment service could not be reached; nothing changed.'),
				values: parsed.values,
				changing: parsed.data.adoptionId
			});
		}
		return { changed: 'Your monthly gift is changed from the next payment on.' };
	},
	/** Which supporter updates this account's address receives. */
	preferences: async (event) => {
		const user = requireRoles(event);
		const parsed = parseForm(preferencesForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors });
		await savePreferences(db(), user.email, parsed.data);
		return { preferencesSaved: 'Your e-mail choices are saved.' };
	},
	password: async (event) => {
		const user = requireRoles(event);
		const parsed = parseForm(passwordForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors });
		if (!(await changePassword(user.id, parsed.data.current, parsed.data.password))) {
			return fail(400, { errors: fieldError('current', 'That is not your current password.') });
		}
		return { saved: 'Your password is changed.' };
	}
};
