import { z } from 'zod';
import { amount } from '$lib/server/adoptions/form';

export const DEFAULT_ADVANCE_DAYS = 31;

export const advanceForm = z.object({
	days: z
		.string()
		.trim()
		.optional()
		.transform((v, ctx) => {
			if (!v) return DEFAULT_ADVANCE_DAYS;
			const days = Number(v);
			if (!/^\d+$/.test(v) || days < 1 || days > 366) {
				ctx.addIssue({ code: 'custom', message: 'Enter a whole number of days from 1 to 366.' });
				return z.NEVER;
			}
			return days;
		})
});

const chargeId = z
	.string({ error: 'Choose a payment from the list.' })
	.trim()
	.regex(/^ch_[A-Za-z0-9]+$/, 'Choose a payment from the list.');

export const refundForm = z.object({ chargeId, amount });

export const disputeForm = z.object({ chargeId });

export const closeDisputeForm = z.object({
	disputeId: z
		.string({ error: 'Choose a dispute from the list.' })
		.trim()
		.regex(/^dp_[A-Za-z0-9]+$/, 'Choose a dispute from the list.'),
	outcome: z.enum(['won', 'lost'], { error: 'Choose whether the dispute was won or lost.' })
});

export const redeliverForm = z.object({
	eventId: z
		.string({ error: 'Choose an event from the list.' })
		.trim()
		.regex(/^evt_[A-Za-z0-9]+$/, 'Choose an event from the list.')
});
