// Zod building blocks for the Newsroom's patient and release forms: they turn the strings a form
// posts into the typed values the services take, and apply the same rules as the services do, so
// that one submission shows every problem at once.
import { z } from 'zod';

type Check<T> = (value: T) => string | null;

function blank(raw: unknown): boolean {
	return raw === undefined || raw === null || (typeof raw === 'string' && raw.trim() === '');
}

/** Free text; empty becomes null. */
export function optionalText(max: number, what: string) {
	return z
		.string()
		.optional()
		.transform((raw, ctx) => {
			const value = (raw ?? '').trim();
			if (!value) return null;
			if (value.length > max) {
				ctx.addIssue({ code: 'custom', message: `Keep ${what} under ${max} characters.` });
				return z.NEVER;
			}
			return value;
		});
}

/** Required free text. */
export function requiredText(max: number, missing: string, what: string) {
	return z
		.string({ error: missing })
		.trim()
		.min(1, missing)
		.max(max, `Keep ${what} under ${max} characters.`);
}

/** A decimal number, or null when left empty; `check` applies the domain's range. */
export function optionalNumber(notANumber: string, check: Check<number>) {
	return z
		.string()
		.optional()
		.transform((raw, ctx) => {
			if (blank(raw)) return null;
			const value = Number(raw!.trim());
			if (!Number.isFinite(value)) {
				ctx.addIssue({ code: 'custom', message: notANumber });
				return z.NEVER;
			}
			const message = check(value);
			if (message) {
				ctx.addIssue({ code: 'custom', message });
				return z.NEVER;
			}
			return value;
		});
}

/** A calendar day ('YYYY-MM-DD' from `<input type="date">`). */
export function day(missing: string, check: Check<string>) {
	return z
		.string({ error: missing })
		.trim()
		.min(1, missing)
		.superRefine((value, ctx) => {
			const message = check(value);
			if (message) ctx.addIssue({ code: 'custom', message });
		});
}

export function optionalDay(check: Check<string>) {
	return z
		.string()
		.optional()
		.transform((raw, ctx) => {
			if (blank(raw)) return null;
			const value = raw!.trim();
			const message = check(value);
			if (message) {
				ctx.addIssue({ code: 'custom', message });
				return z.NEVER;
			}
			return value;
		});
}

/** A checkbox: present means yes. */
export const checkbox = z
	.string()
	.optional()
	.transform((raw) => raw !== undefined && raw !== '' && raw !== 'off');

/** A list typed as text, one item per comma or line. */
export function list(max: number, what: string) {
	return z
		.string()
		.optional()
		.transform((raw, ctx) => {
			const items = (raw ?? '')
				.split(/[,\n]/)
				.map((item) => item.trim())
				.filter(Boolean);
			if (items.some((item) => item.length > max)) {
				ctx.addIssue({ code: 'custom', message: `Keep each ${what} under ${max} characters.` });
				return z.NEVER;
			}
			return items;
		});
}
