import {
	PageSizes,
	PDFArray,
	PDFDict,
	PDFDocument,
	PDFName,
	PDFNumber,
	PDFRawStream,
	type PDFObject,
	type PDFRef
} from 'pdf-lib';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import {
	certificatePdf,
	certificateWording,
	embedCertificateFonts,
	fitText,
	layoutCertificate,
	measure,
	PAGE_HEIGHT,
	PAGE_WIDTH,
	type CertificateData,
	type CertificateLayout
} from './certificate';

const sample: CertificateData = {
	patientName: 'Marea',
	speciesCommon: 'green turtle',
	speciesScientific: 'Chelonia mydas',
	adoptedBy: 'Ana Example',
	levelName: 'Ripple',
	startedOn: '2026-03-04',
	organisation: 'Example Turtle Hospital'
};

let photo: Uint8Array;
beforeAll(async () => {
	photo = await sharp({
		create: { width: 960, height: 640, channels: 3, background: '#3f8ea6' }
	})
		.jpeg()
		.toBuffer();
});

function pageResources(doc: PDFDocument, kind: 'Font' | 'XObject'): PDFObject[] {
	const dict = doc.getPage(0).node.Resources()?.lookupMaybe(PDFName.of(kind), PDFDict);
	// pdf-lib names a resource at every use of a font, so the same object can appear many times.
	const refs = new Set(dict ? [...dict.values()] : []);
	return [...refs].map((ref) => doc.context.lookup(ref as PDFRef)!);
}

function fontDicts(doc: PDFDocument): PDFDict[] {
	return pageResources(doc, 'Font').filter((f): f is PDFDict => f instanceof PDFDict);
}

function imageDicts(doc: PDFDocument): PDFDict[] {
	return pageResources(doc, 'XObject')
		.filter((x): x is PDFRawStream => x instanceof PDFRawStream)
		.map((x) => x.dict)
		.filter((d) => d.get(PDFName.of('Subtype')) === PDFName.of('Image'));
}

const baseFont = (font: PDFDict) => font.lookup(PDFName.of('BaseFont'), PDFName).decodeText();

/** Whether a Type0 font's descendant carries the font program itself (FontFile2: TrueType). */
function isEmbedded(doc: PDFDocument, font: PDFDict): boolean {
	const descendant = font.lookup(PDFName.of('DescendantFonts'), PDFArray).lookup(0, PDFDict);
	const descriptor = descendant.lookup(PDFName.of('FontDescriptor'), PDFDict);
	return descriptor.has(PDFName.of('FontFile2'));
}

describe('the certificate PDF', () => {
	it('is a PDF that pdf-lib reads back: one US Letter landscape page', async () => {
		const bytes = await certificatePdf(sample);
		expect(Buffer.from(bytes.subarray(0, 5)).toString('latin1')).toBe('%PDF-');
		const doc = await PDFDocument.load(bytes);
		expect(doc.getPageCount()).toBe(1);
		const { width, height } = doc.getPage(0).getSize();
		// US Letter is 8.5 × 11 in (ANSI/ASME Y14.1), 72 pt to the inch; pdf-lib's own table agrees.
		expect([width, height]).toEqual([11 * 72, 8.5 * 72]);
		expect([height, width]).toEqual(PageSizes.Letter);
	});

	it('carries its metadata', async () => {
		const doc = await PDFDocument.load(await certificatePdf(sample), { updateMetadata: false });
		expect(doc.getTitle()).toBe('Certificate of symbolic adoption: Marea');
		expect(doc.getAuthor()).toBe('Example Turtle Hospital');
		expect(doc.getCreator()).toBe('Tideward');
		expect(doc.getSubject()).toBe('Ana Example has adopted Marea (Ripple).');
	});

	it('embeds our two families and nothing else', async () => {
		const doc = await PDFDocument.load(await certificatePdf(sample));
		const fonts = fontDicts(doc);
		const names = fonts.map(baseFont);
		// pdf-lib names a subset <PostScript name>-<number>.
		const families = new Set(names.map((n) => n.replace(/-[A-Za-z]+-\d+$/, '')));
		expect(families).toEqual(new Set(['Merriweather', 'SourceSans3']));
		expect(names.map((n) => n.replace(/-\d+$/, '')).sort()).toEqual([
			'Merriweather-Bold',
			'SourceSans3-Italic',
			'SourceSans3-Regular',
			'SourceSans3-SemiBold'
		]);
		expect(fonts.every((f) => isEmbedded(doc, f))).toBe(true);
	});

	it('adds a Latin Extended font only when a name needs it', async () => {
		const doc = await PDFDocument.load(
			await certificatePdf({ ...sample, adoptedBy: 'Łucja Ŝtefanović' })
		);
		const headings = fontDicts(doc)
			.map(baseFont)
			.filter((n) => n.startsWith('Merriweather'));
		expect(headings).toHaveLength(2);
	});

	it('embeds the photo as a JPEG image when given one, and no image otherwise', async () => {
		const withPhoto = await PDFDocument.load(await certificatePdf({ ...sample, photoJpeg: photo }));
		const images = imageDicts(withPhoto);
		expect(images).toHaveLength(1);
		expect(images[0].get(PDFName.of('Filter'))).toBe(PDFName.of('DCTDecode'));
		expect(images[0].lookup(PDFName.of('Width'), PDFNumber).asNumber()).toBe(960);
		expect(images[0].lookup(PDFName.of('Height'), PDFNumber).asNumber()).toBe(640);

		const without = await PDFDocument.load(await certificatePdf(sample));
		expect(imageDicts(without)).toHaveLength(0);
	});

	it('refuses bytes that are not a JPEG', async () => {
		await expect(
			certificatePdf({ ...sample, photoJpeg: new TextEncoder().encode('not a photo') })
		).rejects.toThrow();
	});
});

async function layoutOf(
	data: CertificateData,
	photoSize: { width: number; height: number } | null
) {
	const wording = certificateWording(data);
	const doc = await PDFDocument.create();
	const fonts = await embedCertificateFonts(doc, wording);
	return { wording, fonts, layout: layoutCertificate(wording, fonts, photoSize) };
}

/** Every line measured again with the embedded fonts, inside its column and the page. */
function expectWithinPage(layout: CertificateLayout) {
	const { column } = layout;
	for (const line of layout.lines) {
		const width = line.runs.reduce((w, r) => w + r.font.widthOfTextAtSize(r.text, line.size), 0);
		expect(width).toBeCloseTo(line.width, 6);
		expect(line.x).toBeGreaterThanOrEqual(column.left - 1e-6);
		expect(line.x + width).toBeLessThanOrEqual(column.right + 1e-6);
		expect(line.bottom).toBeGreaterThanOrEqual(0);
		expect(line.top).toBeLessThanOrEqual(PAGE_HEIGHT);
		expect(line.y).toBeGreaterThan(line.bottom);
		expect(line.y + line.size * 0.75).toBeLessThanOrEqual(line.top + 1e-6);
	}
	expect(column.left).toBeGreaterThanOrEqual(0);
	expect(column.right).toBeLessThanOrEqual(PAGE_WIDTH);
	// No two lines that share horizontal space overlap vertically.
	const lines = layout.lines;
	for (let i = 0; i < lines.length; i++) {
		for (let j = i + 1; j < lines.length; j++) {
			const a = lines[i];
			const b = lines[j];
			const sideBySide = a.x + a.width <= b.x || b.x + b.width <= a.x;
			if (sideBySide) continue;
			expect(a.bottom >= b.top - 1e-6 || b.bottom >= a.top - 1e-6, `${a.text} / ${b.text}`).toBe(
				true
			);
		}
	}
}

describe('the layout', () => {
	it('places every part of the wording once', async () => {
		const { layout } = await layoutOf(sample, null);
		expect(layout.lines.map((l) => l.text)).toEqual([
			'Example Turtle Hospital',
			'Certificate of symbolic adoption',
			'This certificate records that',
			'Ana Example',
			'has adopted',
			'Marea',
			'a green turtle in the care of Example Turtle Hospital',
			'Chelonia mydas',
			'ADOPTION LEVEL',
			'Ripple',
			'ADOPTED ON',
			'March 4, 2026',
			'A symbolic adoption: Marea remains a wild animal in our care or at sea.'
		]);
		expectWithinPage(layout);
	});

	it('remembers a patient who died instead of saying it lives', async () => {
		const { wording } = await layoutOf({ ...sample, remembered: true }, null);
		expect(wording.footer).toBe(
			'A symbolic adoption in memory of Marea, who was cared for by Example Turtle Hospital.'
		);
	});

	it('keeps a 200-character name within the page, with or without spaces and a photo', async () => {
		const words = 'Wavecrest Saltmarsh Driftwood Seagrass '.repeat(6).slice(0, 200).trim();
		const solid = 'x'.repeat(200);
		for (const adoptedBy of [words, solid]) {
			for (const photoSize of [null, { width: 960, height: 640 }, { width: 300, height: 1200 }]) {
				const { layout } = await layoutOf(
					{
						...sample,
						adoptedBy,
						patientName: adoptedBy.slice(0, 120),
						levelName: adoptedBy.slice(0, 150),
						organisation: adoptedBy.slice(0, 100)
					},
					photoSize
				);
				expectWithinPage(layout);
				const nameLines = layout.lines.filter((l) => adoptedBy.includes(l.text.replace('…', '')));
				expect(nameLines.length).toBeGreaterThan(1);
			}
		}
	});

	it('wraps a long name without losing any of it when it fits in three lines', async () => {
		const name = 'Wavecrest Saltmarsh Driftwood Seagrass '.repeat(5).slice(0, 200).trim();
		const { layout } = await layoutOf({ ...sample, adoptedBy: name }, null);
		const i = layout.lines.findIndex((l) => l.text === 'This certificate records that');
		const j = layout.lines.findIndex((l) => l.text === 'has adopted');
		expect(
			layout.lines
				.slice(i + 1, j)
				.map((l) => l.text)
				.join(' ')
		).toBe(name);
	});

	it('fits the photo inside its panel with its aspect ratio kept', async () => {
		for (const size of [
			{ width: 960, height: 640 },
			{ width: 300, height: 1200 }
		]) {
			const { layout } = await layoutOf(sample, size);
			const { photo, panel } = layout;
			expect(photo && panel).toBeTruthy();
			if (!photo || !panel) return;
			expect(photo.width / photo.height).toBeCloseTo(size.width / size.height, 9);
			expect(photo.x).toBeGreaterThanOrEqual(panel.x);
			expect(photo.y).toBeGreaterThanOrEqual(panel.y);
			expect(photo.x + photo.width).toBeLessThanOrEqual(panel.x + panel.width);
			expect(photo.y + photo.height).toBeLessThanOrEqual(panel.y + panel.height);
			expect(panel.x + panel.width).toBeLessThanOrEqual(layout.column.left);
		}
	});

	it('leaves out characters that no shipped font has, rather than drawing boxes', async () => {
		const { layout } = await layoutOf({ ...sample, adoptedBy: 'Ana 漢 Example' }, null);
		const line = layout.lines.find((l) => l.text.startsWith('Ana'))!;
		expect(line.runs.map((r) => r.text).join('')).toBe('Ana  Example');
	});
});

describe('fitting text', () => {
	it('shrinks first, then wraps, then cuts with an ellipsis', async () => {
		const { fonts } = await layoutOf(sample, null);
		const stack = fonts.heading;
		const text = 'Wavecrest Saltmarsh Driftwood';
		const natural = measure(stack, text, 30);
		const options = { maxSize: 30, minSize: 10, maxLines: 2 };

		// Too wide at the largest size: the largest half-point size that fits, still one line
		// (the width is proportional to the size: 30 × 0.83 = 24.9, so 24.5).
		const shrunk = fitText(stack, text, { ...options, maxWidth: natural * 0.83 });
		expect(shrunk).toEqual({ size: 24.5, lines: [text] });
		expect(measure(stack, text, 24.5)).toBeLessThanOrEqual(natural * 0.83);
		expect(measure(stack, text, 25)).toBeGreaterThan(natural * 0.83);

		// Too wide even at the smallest size: wrapped at it.
		const narrow = measure(stack, 'Wavecrest Saltmarsh', 10);
		const wrapped = fitText(stack, text, { ...options, maxWidth: narrow });
		expect(wrapped).toEqual({ size: 10, lines: ['Wavecrest Saltmarsh', 'Driftwood'] });

		// More lines than allowed: cut, and the last line says so.
		const cut = fitText(stack, text, { ...options, maxLines: 1, maxWidth: narrow });
		expect(cut.lines).toHaveLength(1);
		expect(cut.lines[0]).toMatch(/…$/);
		expect(measure(stack, cut.lines[0], cut.size)).toBeLessThanOrEqual(narrow);
	});
});
