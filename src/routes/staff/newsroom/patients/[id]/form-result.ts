/** What every action of the patient page answers, read loosely by the sections. */
export interface FormResult {
	form?: string;
	message?: string;
	done?: string;
	errors?: Record<string, string>;
	values?: Record<string, string>;
}

/** The result of the last submission when it came from `name`'s form, else nothing. */
export function resultFor(form: unknown, name: string): FormResult | undefined {
	const result = form as FormResult | null | undefined;
	return result?.form === name ? result : undefined;
}
