/** The aria-describedby value for a field with an optional hint and error message. */
export function describedBy(
	id: string | null | undefined,
	hint?: string,
	error?: string
): string | undefined {
	return (
		[hint ? `${id}-hint` : null, error ? `${id}-error` : null].filter(Boolean).join(' ') ||
		undefined
	);
}
