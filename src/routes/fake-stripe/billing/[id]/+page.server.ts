import { error, fail } from '@sveltejs/kit';
import {
	cancelSubscription,
	keepSubscription,
	portalView,
	TEST_CARDS,
	updateCard
} from '$lib/server/payments/fake';
import {
	formatDate,
	formatInterval,
	formatMoney,
	formText,
	requireFake
} from '../../fake-pages.server';
import type { Actions, PageServerLoad } from './$types';

const STATUS_TEXT: Record<string, string> = {
	active: 'Active',
	past_due: 'Last payment failed',
	canceled: 'Ended',
	unpaid: 'Unpaid'
};

export const load: PageServerLoad = ({ params }) => {
	requireFake();
	const view = portalView(params.id);
	if (!view) error(404, 'This billing page does not exist.');
	return {
		email: view.email,
		returnUrl: view.returnUrl,
		card: view.card
			? `${view.card.brand.toUpperCase()} ending ${view.card.last4}, expires ${String(view.card.expMonth).padStart(2, '0')}/${view.card.expYear}`
			: null,
		subscriptions: view.subscriptions.map((s) => ({
			id: s.id,
			name: s.name,
			price: `${formatMoney(s.amount, s.currency)} ${formatInterval(s.interval)}`,
			status: STATUS_TEXT[s.status] ?? s.status,
			ended: s.status === 'canceled',
			cancelAtPeriodEnd: s.cancelAtPeriodEnd,
			periodEnd: formatDate(s.currentPeriodEnd),
			endedOn: s.endedAt ? formatDate(s.endedAt) : null
		})),
		testCards: TEST_CARDS.map((card) => ({
			number: card.number.replace(/(\d{4})(?=\d)/g, '$1 '),
			effect: card.effect
		}))
	};
};

export const actions: Actions = {
	card: async ({ params, request }) => {
		requireFake();
		const form = await request.formData();
		const values = { name: formText(form, 'name'), expiry: formText(form, 'expiry') };
		if (!values.expiry) {
			return fail(400, {
				form: 'card' as const,
				message: "Your card's expiration date is incomplete.",
				values
			});
		}
		const result = updateCard(params.id, {
			cardNumber: formText(form, 'cardNumber'),
			name: values.name,
			expiry: values.expiry,
			cvc: formText(form, 'cvc')
		});
		if (!result.ok) return fail(400, { form: 'card' as const, message: result.message, values });
		return { form: 'card' as const, done: 'The new card is saved.' };
	},

	cancel: async ({ params, request }) => {
		requireFake();
		const form = await request.formData();
		const result = cancelSubscription(params.id, formText(form, 'subscriptionId'));
		if (!result.ok) return fail(400, { form: 'subscription' as const, message: result.message });
		return {
			form: 'subscription' as const,
			done: 'The monthly gift ends at the end of the paid period.'
		};
	},

	keep: async ({ params, request }) => {
		requireFake();
		const form = await request.formData();
		const result = keepSubscription(params.id, formText(form, 'subscriptionId'));
		if (!result.ok) return fail(400, { form: 'subscription' as const, message: result.message });
		return { form: 'subscription' as const, done: 'The monthly gift continues.' };
	}
};
