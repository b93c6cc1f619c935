import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { loadWoff, measureText, textPath, wrapText } from './font';

const file = (name: string) =>
	readFileSync(`node_modules/@fontsource/source-sans-3/files/source-sans-3-${name}.woff`);
const font = loadWoff(file('latin-600-normal'));
const stack = [font];

describe('reading a WOFF font', () => {
	it('reads the metrics', () => {
		expect(font.unitsPerEm).toBeGreaterThan(0);
		expect(font.ascender).toBeGreaterThan(0);
		expect(font.descender).toBeLessThan(0);
	});

	it('maps characters to glyphs, and a character it lacks to glyph 0', () => {
		expect(font.charToGlyphIndex('A')).toBeGreaterThan(0);
		expect(font.charToGlyphIndex('ó')).toBeGreaterThan(0);
		expect(font.charToGlyphIndex('漢')).toBe(0);
	});

	it('refuses what is not a WOFF 1.0 file', () => {
		expect(() => loadWoff(Buffer.from('wOF2 not really'))).toThrow(/WOFF/);
	});
});

describe('text as paths', () => {
	it('measures in proportion to the size, and wider text as wider', () => {
		expect(measureText(stack, 'Tideward', 40)).toBeCloseTo(measureText(stack, 'Tideward', 20) * 2);
		expect(measureText(stack, 'WWW', 20)).toBeGreaterThan(measureText(stack, 'iii', 20));
	});

	it('draws outlines (composite accents included) and skips characters no font has', () => {
		const d = textPath(stack, 'Timón', 0, 100, 50);
		expect(d.startsWith('M')).toBe(true);
		expect(d).toMatch(/Q/);
		expect(textPath(stack, 'o', 0, 100, 50)).not.toBe(textPath(stack, 'ó', 0, 100, 50));
		expect(textPath(stack, 'A漢', 0, 100, 50)).toBe(textPath(stack, 'A', 0, 100, 50));
		expect(textPath(stack, ' ', 0, 100, 50)).toBe('');
	});

	it('wraps words into lines that fit, and ends a cut text with an ellipsis', () => {
		const width = measureText(stack, 'one two three', 20);
		expect(wrapText(stack, 'one two three four five', 20, width, 3)).toEqual([
			'one two three',
			'four five'
		]);
		const cut = wrapText(stack, 'one two three four five six seven', 20, width, 2);
		expect(cut).toHaveLength(2);
		expect(cut[1].endsWith('…')).toBe(true);
		for (const line of cut) expect(measureText(stack, line, 20)).toBeLessThanOrEqual(width);
		const long = wrapText(stack, 'Supercalifragilistic', 20, 50, 2);
		expect(long).toHaveLength(1);
		expect(long[0].endsWith('…')).toBe(true);
		expect(measureText(stack, long[0], 20)).toBeLessThanOrEqual(50);
	});
});
