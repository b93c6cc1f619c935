import { describe, expect, it } from 'vitest';
import { slugify, uniqueSlug } from './slug';

describe('slugs', () => {
	it('keeps letters and digits, folds accents, joins with single hyphens', () => {
		expect(slugify('  Marea returns to the sea!  ')).toBe('marea-returns-to-the-sea');
		expect(slugify('Coralina’s 2nd check-up — día 40')).toBe('coralina-s-2nd-check-up-dia-40');
		expect(slugify('¡¿!')).toBe('item');
		expect(slugify('a'.repeat(80)).length).toBe(60);
	});

	it('adds the first free number', () => {
		expect(uniqueSlug('luz', new Set())).toBe('luz');
		expect(uniqueSlug('luz', new Set(['luz', 'luz-2']))).toBe('luz-3');
	});
});
