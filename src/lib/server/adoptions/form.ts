import { z } from 'zod';
import { email, name } from '../forms';

/** The smallest and largest gift the form accepts, in cents (the processor's minimum is 50¢). */
export const MIN_AMOUNT_CENTS = 100;
export const MAX_AMOUNT_CENTS = 1_000_000;

const optionalText = (max: number, label: string) =>
	z
		.string()
		.trim()
		.max(max, `Keep the ${label} under ${max} characters.`)
		.optional()
		.transform((v) => (v ? v : null));

/** Dollars and cents as typed ("25", "25.5", "25.50") to integer cents, or null when empty. */
export const amount = z
	.string()
	.trim()
	.optional()
	.transform((v, ctx) => {
		if (!v) return null;
		const match = /^(\d{1,7})(?:\.(\d{1,2}))?$/.exec(v.replace(/^\$/, ''));
		if (!match) {
			ctx.addIssue({ code: 'custom', message: 'Enter an amount in dollars, like 25 or 25.50.' });
			return z.NEVER;
		}
		return Number(match[1]) * 100 + Number((match[2] ?? '').padEnd(2, '0'));
	});

export const adoptForm = z
	.object({
		attemptId: z.uuid({ error: 'This form has expired; reload the page and try again.' }),
		levelId: z.string({ error: 'Choose an adoption level.' }).min(1, 'Choose an adoption level.'),
		amount,
		kind: z.enum(['self', 'gift', 'classroom'], { error: 'Choose who the adoption is for.' }),
		supporterName: name.optional(),
		supporterEmail: email.optional(),
		recipientName: optionalText(120, 'recipient’s name'),
		recipientEmail: z
			.string()
			.trim()
			.optional()
			.transform((v) => (v ? v : null))
			.pipe(z.email({ error: 'Enter the recipient’s e-mail, like name@example.org.' }).nullable()),
		giftMessage: optionalText(500, 'message'),
		deliverOn: z
			.string()
			.trim()
			.optional()
			.transform((v) => (v ? v : null))
			.pipe(z.iso.date({ error: 'Enter the delivery date as a date.' }).nullable()),
		teacherName: optionalText(120, 'teacher’s name'),
		schoolName: optionalText(200, 'school’s name'),
		classSize: z
			.string()
			.trim()
			.optional()
			.transform((v, ctx) => {
				if (!v) return null;
				const n = Number(v);
				if (!Number.isInteger(n) || n < 1 || n > 200) {
					ctx.addIssue({ code: 'custom', message: 'Enter a class size from 1 to 200.' });
					return z.NEVER;
				}
				return n;
			})
	})
	.superRefine((v, ctx) => {
		if (v.kind === 'gift') {
			if (!v.recipientName)
				ctx.addIssue({
					code: 'custom',
					path: ['recipientName'],
					message: 'Enter the recipient’s name.'
				});
			if (!v.recipientEmail)
				ctx.addIssue({
					code: 'custom',
					path: ['recipientEmail'],
					message: 'Enter the recipient’s e-mail, so we can send them the adoption.'
				});
		}
		if (v.kind === 'classroom') {
			if (!v.teacherName)
				ctx.addIssue({
					code: 'custom',
					path: ['teacherName'],
					message: 'Enter the teacher’s name.'
				});
			if (!v.schoolName)
				ctx.addIssue({ code: 'custom', path: ['schoolName'], message: 'Enter the school’s name.' });
			if (!v.classSize)
				ctx.addIssue({ code: 'custom', path: ['classSize'], message: 'Enter the class size.' });
		}
	});
