import { z } from 'zod';
import { CELL_SIZE_VALUES, LOCATION_CLASS_VALUES } from '$lib/server/db/schema';

export const settingsForm = z.object({
	delayDays: z.coerce
		.number({ error: 'Enter the delay in whole days.' })
		.int('Enter the delay in whole days.')
		.min(7, 'The delay cannot be shorter than 7 days: recent positions put the animal at risk.')
		.max(365, 'Keep the delay within a year.'),
	cellDeg: z.enum(CELL_SIZE_VALUES, { error: 'Choose one of the grid sizes.' }),
	minimumClass: z.enum(LOCATION_CLASS_VALUES, { error: 'Choose a location class.' }),
	maxSpeedMs: z
		.string()
		.trim()
		.transform((v, ctx) => {
			if (v === '') return null;
			const n = Number(v);
			if (!Number.isFinite(n) || n < 0.1 || n > 10) {
				ctx.addIssue({
					code: 'custom',
					message: 'Enter a speed between 0.1 and 10 m/s, or leave it empty for the default.'
				});
				return z.NEVER;
			}
			return n;
		})
});

export const transmitterForm = z.object({
	transmitterId: z
		.string()
		.trim()
		.max(64, 'Keep the transmitter ID under 64 characters.')
		.regex(/^[A-Za-z0-9._:-]*$/, 'Use letters, digits, dots, dashes, colons or underscores.')
		.transform((v) => (v === '' ? null : v))
});
