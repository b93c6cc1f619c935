import { error, fail, redirect } from '@sveltejs/kit';
import { randomUUID } from 'node:crypto';
import {
	activeLevels,
	adoptablePatient,
	CheckoutUnavailable,
	startCheckout
} from '$lib/server/adoptions/checkout';
import { adoptForm, MAX_AMOUNT_CENTS, MIN_AMOUNT_CENTS } from '$lib/server/adoptions/form';
import { parseForm } from '$lib/server/forms';
import type { Actions, PageServerLoad } from './$types';

function formatCents(cents: number): string {
	return `$${(cents / 100).toFixed(2)}`;
}

export const load: PageServerLoad = async ({ params, url, locals }) => {
	const patient = await adoptablePatient(params.slug);
	if (!patient) error(404, 'This patient cannot be adopted.');
	const levels = await activeLevels();
	return {
		patient: { slug: patient.slug, name: patient.name },
		levels: levels.map((l) => ({
			id: l.id,
			name: l.name,
			description: l.description,
			amountCents: l.amountCents,
			interval: l.interval,
			kind: l.kind,
			goods: l.goods,
			fairMarketValueCents: l.fairMarketValueCents
		})),
		attemptId: randomUUID(),
		cancelled: url.searchParams.has('cancelled'),
		signedIn: locals.user ? { name: locals.user.name, email: locals.user.email } : null
	};
};

export const actions: Actions = {
	default: async ({ params, request, locals }) => {
		const patient = await adoptablePatient(params.slug);
		if (!patient) error(404, 'This patient cannot be adopted.');
		const parsed = parseForm(adoptForm, await request.formData());
		if (!parsed.ok) return fail(400, { errors: parsed.errors, values: parsed.values });
		const input = parsed.data;
		const level = (await activeLevels()).find((l) => l.id === input.levelId);
		if (!level) {
			return fail(400, {
				errors: { levelId: 'That adoption level is not offered; choose one of the list.' },
				values: parsed.values
			});
		}
		const amountCents = input.amount ?? level.amountCents;
		const minimum = Math.max(level.amountCents, MIN_AMOUNT_CENTS);
		if (amountCents < minimum || amountCents > MAX_AMOUNT_CENTS) {
			return fail(400, {
				errors: {
					amount: `The ${level.name} level is at least ${formatCents(minimum)} and at most ${formatCents(MAX_AMOUNT_CENTS)}.`
				},
				values: parsed.values
			});
		}
		const kind = level.kind === 'classroom' ? 'classroom' : input.kind;
		if (kind === 'classroom' && level.kind !== 'classroom') {
			return fail(400, {
				errors: { kind: 'Choose a classroom level for a classroom adoption.' },
				values: parsed.values
			});
		}
		if (kind === 'classroom' && (!input.teacherName || !input.schoolName || !input.classSize)) {
			return fail(400, {
				errors: {
					...(!input.teacherName && { teacherName: 'Enter the teacher’s name.' }),
					...(!input.schoolName && { schoolName: 'Enter the school’s name.' }),
					...(!input.classSize && { classSize: 'Enter the class size.' })
				},
				values: parsed.values
			});
		}
		const supporter = locals.user
			? { id: locals.user.id, email: locals.user.email, name: locals.user.name }
			: input.supporterEmail && input.supporterName
				? { id: null, email: input.supporterEmail, name: input.supporterName }
				: null;
		if (!supporter) {
			return fail(400, {
				errors: {
					...(!input.supporterName && { supporterName: 'Enter your name.' }),
					...(!input.supporterEmail && { supporterEmail: 'Enter your e-mail address.' })
				},
				values: parsed.values
			});
		}
		let url: string;
		try {
			({ url } = await startCheckout({
				attemptId: input.attemptId,
				patientId: patient.id,
				levelId: level.id,
				amountCents,
				kind,
				supporter,
				recipientName: kind === 'gift' ? input.recipientName : null,
				recipientEmail: kind === 'gift' ? input.recipientEmail : null,
				giftMessage: kind === 'gift' ? input.giftMessage : null,
				deliverOn: kind === 'gift' ? input.deliverOn : null,
				teacherName: kind === 'classroom' ? input.teacherName : null,
				schoolName: kind === 'classroom' ? input.schoolName : null,
				classSize: kind === 'classroom' ? input.classSize : null
			}));
		} catch (problem) {
			if (problem instanceof CheckoutUnavailable) {
				return fail(503, { errors: { form: problem.message }, values: parsed.values });
			}
			throw problem;
		}
		redirect(303, url);
	}
};
