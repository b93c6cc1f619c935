/** A URL slug from a name or title: lower case ASCII letters, digits and single hyphens. */
export function slugify(text: string, maxLength = 60): string {
	const slug = text
		.normalize('NFKD')
		.replace(/[\u0300-\u036f]/g, '')
		.toLowerCase()
		.replace(/[^a-z0-9]+/g, '-')
		.replace(/^-+|-+$/g, '')
		.slice(0, maxLength)
		.replace(/-+$/g, '');
	return slug || 'item';
}

/** The first of `base`, `base-2`, `base-3`… that `taken` does not hold. */
export function uniqueSlug(base: string, taken: ReadonlySet<string>): string {
	if (!taken.has(base)) return base;
	for (let n = 2; ; n++) if (!taken.has(`${base}-${n}`)) return `${base}-${n}`;
}
