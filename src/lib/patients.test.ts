import { describe, expect, it } from 'vitest';
import { formatDay, formatLengthCm, formatWeightKg, isInCare, SPECIES_LABELS } from './patients';

describe('patient formats', () => {
	it('shows a calendar day as that same day in every time zone', () => {
		expect(formatDay('2026-03-01')).toBe('March 1, 2026');
	});

	it('shows small weights in grams and others in kilograms', () => {
		expect(formatWeightKg('0.05')).toBe('50 g');
		expect(formatWeightKg('54.10')).toBe('54.1 kg');
		expect(formatWeightKg(null)).toBeNull();
	});

	it('shows carapace length in centimetres', () => {
		expect(formatLengthCm('72.8')).toBe('72.8 cm');
		expect(formatLengthCm('68.0')).toBe('68 cm');
	});

	it('names all seven species with their scientific names', () => {
		expect(Object.keys(SPECIES_LABELS)).toHaveLength(7);
		expect(SPECIES_LABELS.kemps_ridley.scientific).toBe('Lepidochelys kempii');
	});

	it('counts permanent residents as in care and released patients as not', () => {
		expect(isInCare('permanent_resident')).toBe(true);
		expect(isInCare('released')).toBe(false);
	});
});
