import { z } from 'zod';

export type FieldErrors = Record<string, string>;

/** Shown beside a field whose value holds U+0000, which PostgreSQL text cannot store. */
export const NUL_IN_FIELD =
	'Remove the invisible NUL character (U+0000) from this field; it cannot be saved.';

/**
 * Reads a form into a zod schema; returns the parsed data or a message per field. A value with
 * a NUL character is refused here for every form, before the schema: the database would fail on
 * it (a 500) instead of answering with a message.
 */
export function parseForm<S extends z.ZodType>(
	schema: S,
	form: FormData
):
	| { ok: true; data: z.infer<S>; values: Record<string, string> }
	| { ok: false; errors: FieldErrors; values: Record<string, string> } {
	const values: Record<string, string> = {};
	const nul: FieldErrors = {};
	for (const [key, value] of form) {
		if (typeof value !== 'string') continue;
		if (value.includes('\u0000')) nul[key] = NUL_IN_FIELD;
		if (!key.toLowerCase().includes('password')) values[key] = value.replaceAll('\u0000', '');
	}
	if (Object.keys(nul).length > 0) return { ok: false, errors: nul, values };
	const raw: Record<string, FormDataEntryValue | FormDataEntryValue[]> = {};
	for (const key of new Set(form.keys())) {
		const all = form.getAll(key);
		raw[key] = all.length > 1 ? all : all[0];
	}
	const result = schema.safeParse(raw);
	if (result.success) return { ok: true, data: result.data, values };
	const errors: FieldErrors = {};
	for (const issue of result.error.issues) {
		const key = String(issue.path[0] ?? 'form');
		errors[key] ??= issue.message;
	}
	return { ok: false, errors, values };
}

export const email = z
	.string({ error: 'Enter your e-mail address.' })
	.trim()
	.min(1, 'Enter your e-mail address.')
	.max(254, 'That e-mail address is too long.')
	.pipe(z.email({ error: 'Enter an e-mail address like name@example.org.' }));

export const name = z
	.string({ error: 'Enter a name.' })
	.trim()
	.min(1, 'Enter a name.')
	.max(120, 'Keep the name under 120 characters.');

export const newPassword = z
	.string({ error: 'Choose a password.' })
	.min(10, 'Use at least 10 characters.')
	.max(200, 'Keep the password under 200 characters.');

/**
 * A local path to return to after signing in; anything else falls back to the default. The path
 * must be printable ASCII without backslashes, as `url.pathname + url.search` always is: browsers
 * drop tabs and line breaks from a URL ("/\t/evil.example" becomes "//evil.example", another
 * site) and read "\" as "/", and the Location header takes neither line breaks nor characters
 * beyond Latin-1 (SvelteKit would fail with a 500).
 */
export function safeRedirect(target: string | null | undefined, fallback: string): string {
	if (!target || !/^\/[\x21-\x5b\x5d-\x7e]*$/.test(target) || target.startsWith('//')) {
		return fallback;
	}
	return target;
}

/** A message for one field, typed like parseForm's so pages read both the same way. */
export function fieldError(field: string, message: string): FieldErrors {
	return { [field]: message };
}
