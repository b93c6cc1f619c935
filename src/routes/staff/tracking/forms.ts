import { z } from 'zod';

const whole = (label: string, min: number, max: number, unit: string) =>
	z.coerce
		.number({ error: `Enter the ${label} as a whole number.` })
		.int(`Enter the ${label} as a whole number.`)
		.min(min, `The ${label} must be at least ${min} ${unit}.`)
		.max(max, `The ${label} can be at most ${max} ${unit}.`);

export const deskSettingsForm = z.object({
	waypointStepKm: whole('waypoint step', 50, 5000, 'km'),
	silenceDays: whole('silence period', 5, 365, 'days'),
	inlandMetres: whole('inland distance', 1000, 50000, 'm')
});
