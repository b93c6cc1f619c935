import {
	decodePDFRawStream,
	PageSizes,
	PDFArray,
	PDFDict,
	PDFDocument,
	PDFName,
	PDFRawStream,
	type PDFRef
} from 'pdf-lib';
import { describe, expect, it } from 'vitest';
import { NO_GOODS_STATEMENT, VOID_CAUTION } from './index';
import {
	embedReceiptFonts,
	layoutReceipt,
	MARGIN,
	PAGE_HEIGHT,
	PAGE_WIDTH,
	receiptContent,
	renderReceiptPdf,
	ReceiptOverflowError,
	type ReceiptLayout,
	type ReceiptPdfData
} from './pdf';

// Invented organisation and supporter.
const sample: ReceiptPdfData = {
	number: 123,
	issuedAt: new Date('2026-03-05T14:00:00Z'),
	status: 'issued',
	organisation: {
		legalName: 'Saltmarsh Sea Turtle Hospital, Inc.',
		displayName: 'Saltmarsh',
		taxId: '00-0000000',
		postalAddress: '12 Dune Road\nPort Example, FL 00000'
	},
	donor: { name: 'Zoë Ñúñez-Ålvarez', email: 'zoe@example.org' },
	gift: {
		amountCents: 100_00,
		currency: 'usd',
		paidAt: new Date('2026-03-04T15:00:00Z'),
		description: 'Swell adoption of Marea',
		goodsDescription: 'Swell keepsake kit',
		fairMarketValueCents: 12_00,
		tokenItem: false
	}
};

const withGift = (gift: Partial<ReceiptPdfData['gift']>, rest: Partial<ReceiptPdfData> = {}) => ({
	...sample,
	...rest,
	gift: { ...sample.gift, ...gift }
});

function rawStream(object: unknown): PDFRawStream {
	if (!(object instanceof PDFRawStream)) throw new Error('expected a stream as written by pdf-lib');
	return object;
}

/**
 * The text a PDF reader would extract: each text-showing operator's glyph ids mapped back to
 * characters through its font's ToUnicode CMap (the map pdf-lib writes for embedded fonts), one
 * entry per line on the page (runs on the same baseline drawn one after the other are joined).
 */
async function pdfLines(bytes: Uint8Array): Promise<string[]> {
	const doc = await PDFDocument.load(bytes);
	const page = doc.getPage(0).node;
	const fontDict = page.Resources()!.lookup(PDFName.of('Font'), PDFDict);
	const maps = new Map<string, Map<string, string>>();
	for (const [name, ref] of fontDict.entries()) {
		const font = doc.context.lookup(ref as PDFRef, PDFDict);
		const cmap = Buffer.from(
			decodePDFRawStream(rawStream(font.lookup(PDFName.of('ToUnicode')))).decode()
		).toString('latin1');
		const map = new Map<string, string>();
		for (const [, glyph, units] of cmap.matchAll(/<([0-9a-f]{4})> <([0-9a-f]+)>/gi)) {
			const codes = units.match(/.{4}/g)!.map((u) => parseInt(u, 16));
			map.set(glyph.toLowerCase(), String.fromCharCode(...codes));
		}
		maps.set(name.asString(), map);
	}
	const contents = page.Contents();
	const streams =
		contents instanceof PDFArray
			? contents.asArray().map((ref) => rawStream(doc.context.lookup(ref)))
			: [rawStream(contents)];
	const ops = streams
		.map((s) => Buffer.from(decodePDFRawStream(s).decode()).toString('latin1'))
		.join('\n');
	const lines: { y: string; text: string }[] = [];
	for (const [, block] of ops.matchAll(/BT\n([\s\S]*?)\nET/g)) {
		const font = /(\/\S+) [\d.]+ Tf/.exec(block)![1];
		const y = /[\d.-]+ [\d.-]+ [\d.-]+ [\d.-]+ [\d.-]+ ([\d.-]+) Tm/.exec(block)![1];
		const hex = /<([0-9A-Fa-f]*)> Tj/.exec(block)![1];
		const text = (hex.match(/.{4}/g) ?? [])
			.map((glyph) => maps.get(font)!.get(glyph.toLowerCase()) ?? '\uFFFD')
			.join('');
		const last = lines.at(-1);
		if (last && last.y === y) last.text += text;
		else lines.push({ y, text });
	}
	return lines.map((line) => line.text);
}

/** The page's text with wrapped lines joined by spaces, for checking whole sentences. */
const flat = (lines: string[]) => lines.join(' ').replace(/\s+/g, ' ');

async function render(data: ReceiptPdfData) {
	const bytes = await renderReceiptPdf(data);
	const lines = await pdfLines(bytes);
	return { bytes, lines, text: flat(lines) };
}

describe('the receipt PDF', () => {
	it('is one US Letter portrait page', async () => {
		const bytes = await renderReceiptPdf(sample);
		expect(Buffer.from(bytes.subarray(0, 5)).toString('latin1')).toBe('%PDF-');
		const doc = await PDFDocument.load(bytes);
		expect(doc.getPageCount()).toBe(1);
		// US Letter is 8.5 × 11 in (ANSI/ASME Y14.1), 72 pt to the inch; pdf-lib's own table agrees.
		expect(doc.getPage(0).getSize()).toEqual({ width: 612, height: 792 });
		expect([PAGE_WIDTH, PAGE_HEIGHT]).toEqual([8.5 * 72, 11 * 72]);
		expect([PAGE_WIDTH, PAGE_HEIGHT]).toEqual(PageSizes.Letter);
	});

	it('carries its title, author and issue date', async () => {
		const doc = await PDFDocument.load(await renderReceiptPdf(sample), { updateMetadata: false });
		expect(doc.getTitle()).toBe('Contribution receipt No. 000123');
		expect(doc.getAuthor()).toBe('Saltmarsh Sea Turtle Hospital, Inc.');
		expect(doc.getSubject()).toBe('$100.00 received on March 4, 2026.');
		expect(doc.getCreator()).toBe('Tideward');
		expect(doc.getCreationDate()).toEqual(sample.issuedAt);
	});

	it('prints the number, the amounts, the deductible amount and the disclosure for $100 with the $12 kit', async () => {
		// IRS Publication 1771: over $75 with goods → the quid pro quo statement; $100 − $12 = $88.
		const { lines, text } = await render(sample);
		expect(lines).toContain('No. 000123');
		expect(lines).toContain('Contribution receipt');
		expect(lines).toContain('Issued March 5, 2026');
		expect(text).toContain('Saltmarsh Sea Turtle Hospital, Inc.');
		expect(text).toContain('Employer Identification Number (EIN): 00-0000000');
		expect(text).toContain('12 Dune Road');
		expect(text).toContain('Port Example, FL 00000');
		expect(text).toContain('Amount received$100.00');
		expect(text).toContain('Estimated fair market value$12.00');
		expect(text).toContain('Deductible amount$88.00');
		expect(text).toContain(
			'In exchange for this contribution, Saltmarsh Sea Turtle Hospital, Inc. provided: Swell keepsake kit. ' +
				'Our good-faith estimate of the fair market value of these goods or services is $12.00. ' +
				'The amount deductible for federal income tax purposes is limited to the excess of the payment of $100.00 over that value: $88.00.'
		);
		expect(text).not.toContain(NO_GOODS_STATEMENT);
		expect(text).toContain('Please keep this receipt with your records.');
		expect(text).toContain('Saltmarsh · Receipt No. 000123');
	});

	it('renders a Latin-1 name and a Latin Extended name exactly', async () => {
		const latin1 = await render(sample);
		expect(latin1.lines).toContain('Received fromZoë Ñúñez-Ålvarez');
		expect(latin1.text).toContain('from Zoë Ñúñez-Ålvarez, received on March 4, 2026.');

		const extended = await render({
			...sample,
			donor: { name: 'Łucja Ŝtefanović', email: 'lucja@example.org' }
		});
		expect(extended.lines).toContain('Received fromŁucja Ŝtefanović');
		expect(extended.text).not.toContain('\uFFFD');
	});

	it('says no goods or services were provided, with no deductible row, when none were', async () => {
		const { text } = await render(
			withGift({ amountCents: 250_00, goodsDescription: '', fairMarketValueCents: 0 })
		);
		expect(text).toContain('Amount received$250.00');
		expect(text).toContain(NO_GOODS_STATEMENT);
		expect(text).toContain('Goods or services providedNone');
		expect(text).not.toContain('limited to the excess');
		expect(text).not.toContain('Deductible amount');
	});

	it('"Swell" at $15: the goods statement with $3.00 deductible (IRS Publication 1771)', async () => {
		const { text } = await render(withGift({ amountCents: 15_00 }));
		expect(text).toContain('Deductible amount$3.00');
		expect(text).toContain(
			'limited to the excess of the payment of $15.00 over that value: $3.00.'
		);
	});

	it('disregards a logo item of insubstantial value (Rev. Proc. 2025-32, 2026 limits)', async () => {
		const { text } = await render(
			withGift({
				amountCents: 69_50,
				goodsDescription: 'Sticker with our logo',
				fairMarketValueCents: 13_90,
				tokenItem: true
			})
		);
		expect(text).toContain(NO_GOODS_STATEMENT);
		expect(text).not.toContain('Sticker');
	});

	it('states 501(c)(3) status only when told to', async () => {
		expect((await render(sample)).text).not.toMatch(/501\(c\)/);
		const { text } = await render({ ...sample, publicCharity501c3: true });
		expect(text).toContain(
			'is a public charity exempt from federal income tax under section 501(c)(3) of the Internal Revenue Code.'
		);
	});

	it('marks a corrected receipt with the number it voids', async () => {
		const { lines, text } = await render({ ...sample, status: 'corrected', replacesNumber: 122 });
		expect(text).toContain('Corrected contribution receipt');
		expect(lines).toContain('This corrects receipt No. 000122, which is void.');
		expect(text).toContain('Deductible amount$88.00');
	});

	it('prints a void notice after a full refund, without the goods statement', async () => {
		const { lines, text } = await render({
			...sample,
			status: 'void',
			refundedAt: new Date('2026-03-20T12:00:00Z')
		});
		expect(text).toContain('Notice of void receipt');
		expect(lines).toContain('Receipt No. 000123 is void.');
		expect(text).toContain('was refunded in full on March 20, 2026');
		expect(text).toContain('StatusVoid: refunded in full');
		expect(text).toContain(VOID_CAUTION);
		expect(text).not.toContain('Please keep this receipt');
		expect(text).not.toContain('limited to the excess');
		expect(text).not.toContain('Deductible amount');
		expect(text).not.toContain(NO_GOODS_STATEMENT);
	});

	it('refuses other currencies and countries', async () => {
		await expect(renderReceiptPdf(withGift({ currency: 'eur' }))).rejects.toThrow(/US dollars/);
		await expect(renderReceiptPdf({ ...sample, countryCode: 'CA' })).rejects.toThrow(
			'No tax-receipt rules for country "CA"'
		);
	});
});

async function layoutOf(data: ReceiptPdfData) {
	const content = receiptContent(data);
	const doc = await PDFDocument.create();
	const fonts = await embedReceiptFonts(doc, content);
	return { content, fonts, layout: layoutReceipt(content, fonts) };
}

/** Every line measured again with its fonts, inside the margins, and no two lines overlapping. */
function expectWithinMargins(layout: ReceiptLayout) {
	const { column, lines } = layout;
	expect(column).toEqual({
		left: MARGIN,
		right: PAGE_WIDTH - MARGIN,
		bottom: MARGIN,
		top: PAGE_HEIGHT - MARGIN
	});
	for (const line of lines) {
		const width = line.runs.reduce((w, r) => w + r.font.widthOfTextAtSize(r.text, line.size), 0);
		expect(width).toBeCloseTo(line.width, 6);
		expect(line.x, line.text).toBeGreaterThanOrEqual(column.left - 1e-6);
		expect(line.x + width, line.text).toBeLessThanOrEqual(column.right + 1e-6);
		expect(line.bottom, line.text).toBeGreaterThanOrEqual(column.bottom - 1e-6);
		expect(line.top, line.text).toBeLessThanOrEqual(column.top + 1e-6);
	}
	for (let i = 0; i < lines.length; i++) {
		for (let j = i + 1; j < lines.length; j++) {
			const a = lines[i];
			const b = lines[j];
			if (a.x + a.width <= b.x || b.x + b.width <= a.x) continue;
			expect(a.bottom >= b.top - 1e-6 || b.bottom >= a.top - 1e-6, `${a.text} / ${b.text}`).toBe(
				true
			);
		}
	}
}

describe('the layout', () => {
	it('keeps the ordinary receipt within the margins at full size', async () => {
		const { layout } = await layoutOf(sample);
		expect(layout.scale).toBe(1);
		expectWithinMargins(layout);
	});

	it('wraps long names, an unbroken e-mail address and a long description within the margins', async () => {
		const words = 'Wavecrest Saltmarsh Driftwood Seagrass '.repeat(6).slice(0, 200).trim();
		const data: ReceiptPdfData = {
			...sample,
			status: 'corrected',
			replacesNumber: 99,
			organisation: {
				...sample.organisation,
				legalName: words.slice(0, 120),
				postalAddress: 'Line one\nLine two\nLine three\nLine four\nLine five\nLine six'
			},
			donor: { name: words, email: `${'x'.repeat(120)}@example.org` },
			gift: {
				...sample.gift,
				description: words,
				goodsDescription: words.slice(0, 160)
			},
			publicCharity501c3: true
		};
		const { layout } = await layoutOf(data);
		expectWithinMargins(layout);
		const texts = layout.lines.map((l) => l.text);
		// Nothing lost: the wrapped pieces of the e-mail address put back together.
		expect(texts.filter((t) => /^x+(@example\.org)?$|^x*@example\.org$/.test(t)).join('')).toBe(
			data.donor.email
		);
		expect(texts.join(' ')).toContain('over that value: $88.00.');
	});

	it('sets the type smaller rather than run off the page, and refuses what cannot fit', async () => {
		const long = (words: number) => 'Seagrass '.repeat(words).trim();
		const { layout } = await layoutOf(withGift({ goodsDescription: long(120) }));
		expect(layout.scale).toBeLessThan(1);
		expectWithinMargins(layout);
		// The goods statement is never cut short: the whole of it is on the page.
		expect(layout.lines.map((l) => l.text).join(' ')).toContain(
			`provided: ${long(120)}. Our good-faith estimate`
		);
		await expect(layoutOf(withGift({ goodsDescription: long(400) }))).rejects.toThrow(
			ReceiptOverflowError
		);
	});
});
