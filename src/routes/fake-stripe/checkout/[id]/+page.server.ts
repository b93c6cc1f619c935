import { error, fail, redirect } from '@sveltejs/kit';
import { checkoutView, payCheckoutSession, TEST_CARDS } from '$lib/server/payments/fake';
import {
	formatDate,
	formatInterval,
	formatMoney,
	formText,
	requireFake
} from '../../fake-pages.server';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = ({ params }) => {
	requireFake();
	const view = checkoutView(params.id);
	if (!view) error(404, 'This payment page does not exist.');
	return {
		checkout: {
			status: view.status,
			monthly: view.mode === 'subscription',
			email: view.email,
			cancelUrl: view.cancelUrl,
			expires: formatDate(view.expiresAt),
			total: formatMoney(view.amountTotal, view.currency),
			every: formatInterval(view.lineItems[0]?.interval ?? null, view.lineItems[0]?.intervalCount),
			items: view.lineItems.map((item) => ({
				name: item.name,
				description: item.description,
				quantity: item.quantity,
				amount: formatMoney(item.amount, view.currency),
				every: formatInterval(item.interval, item.intervalCount)
			}))
		},
		testCards: TEST_CARDS.map((card) => ({
			number: card.number.replace(/(\d{4})(?=\d)/g, '$1 '),
			effect: card.effect
		}))
	};
};

export const actions: Actions = {
	pay: async ({ params, request }) => {
		requireFake();
		const form = await request.formData();
		const values = {
			email: formText(form, 'email'),
			name: formText(form, 'name'),
			expiry: formText(form, 'expiry')
		};
		if (!values.expiry) {
			return fail(400, { message: "Your card's expiration date is incomplete.", values });
		}
		const result = payCheckoutSession(params.id, {
			cardNumber: formText(form, 'cardNumber'),
			name: values.name,
			expiry: values.expiry,
			cvc: formText(form, 'cvc'),
			email: values.email || undefined
		});
		// The card number is not sent back into the form.
		if (!result.ok) return fail(400, { message: result.message, values });
		redirect(303, result.redirectUrl);
	}
};
