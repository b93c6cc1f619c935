import merriweatherLatin from '@fontsource/merriweather/files/merriweather-latin-700-normal.woff?inline';
import merriweatherLatinExt from '@fontsource/merriweather/files/merriweather-latin-ext-700-normal.woff?inline';
import sourceSansItalicLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-400-italic.woff?inline';
import sourceSansItalicLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-400-italic.woff?inline';
import sourceSansLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-400-normal.woff?inline';
import sourceSansLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-400-normal.woff?inline';
import sourceSansStrongLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-600-normal.woff?inline';
import sourceSansStrongLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-600-normal.woff?inline';
import fontkit from '@pdf-lib/fontkit';
import { PDFDocument, rgb, type RGB } from 'pdf-lib';
import {
	drawLines,
	embedStack,
	fitText,
	measure,
	runsOf,
	type FontStack,
	type PlacedLine
} from '$lib/server/adoptions/certificate';
import { receiptRules } from './index';
import {
	cleanText,
	formatReceiptDate,
	formatReceiptNumber,
	type ReceiptStatus,
	type UsReceiptTerms,
	type UsReceiptWording
} from './us';

// The receipt for one gift as a PDF: one US Letter portrait page drawn with pdf-lib and the fonts
// shipped with the app, loaded as the adoption certificate loads them (Vite `?inline`; fontkit
// reads WOFF 1.0; pdf-lib embeds only the glyphs used). The terms and the wording are computed
// here from the gift, through the country's receipt rules, so that the PDF cannot disagree with
// them; `receiptContent` gives the same content to whoever needs it without a PDF.

export interface ReceiptPdfData {
	/** Printed as "No. 000123". */
	number: number;
	issuedAt: Date;
	status: ReceiptStatus;
	/** The receipt a corrected receipt replaces (required when `status` is 'corrected'). */
	replacesNumber?: number;
	organisation: {
		legalName: string;
		displayName: string;
		/** The EIN; left off while empty. */
		taxId: string;
		/** One line per line of the address. */
		postalAddress: string;
	};
	donor: { name: string; email: string };
	gift: {
		amountCents: number;
		/** ISO 4217, any case; the United States rules take USD only. */
		currency: string;
		paidAt: Date;
		/** What the gift was, e.g. "Swell adoption of Marea". */
		description: string;
		/** '' when nothing was given in return. */
		goodsDescription: string;
		fairMarketValueCents: number;
		tokenItem: boolean;
	};
	/** ISO 3166-1 alpha-2 code of the rules to apply; default 'US'. */
	countryCode?: string;
	/** Say the organisation is a 501(c)(3) public charity; only when staff have confirmed it. */
	publicCharity501c3?: boolean;
	/** IANA time zone for the printed dates and the tax year; default 'UTC'. */
	timeZone?: string;
	/** When the payment was refunded in full (printed on a void notice). */
	refundedAt?: Date;
	/** The corrected receipt that replaces this one after a partial refund. */
	voidedBy?: number;
}

/** US Letter portrait, in points. */
export const PAGE_WIDTH = 612;
export const PAGE_HEIGHT = 792;
/** Three-quarters of an inch all round. */
export const MARGIN = 54;

export interface ReceiptDetail {
	label: string;
	value: string;
}

export interface ReceiptContent {
	number: string;
	issuedOn: string;
	terms: UsReceiptTerms;
	wording: UsReceiptWording;
	/** The organisation's public name, shown above its legal name when the two differ. */
	displayName: string;
	postalAddress: string[];
	/** The gift in label/value rows. */
	details: ReceiptDetail[];
	footer: string;
}

/** Everything the receipt says, computed from the gift with the country's rules. */
export function receiptContent(data: ReceiptPdfData): ReceiptContent {
	const rules = receiptRules(data.countryCode ?? 'US');
	const { gift } = data;
	const timeZone = data.timeZone ?? 'UTC';
	const terms = rules.terms({
		amountCents: gift.amountCents,
		fairMarketValueCents: gift.fairMarketValueCents,
		goodsDescription: gift.goodsDescription,
		tokenItem: gift.tokenItem,
		paidAt: gift.paidAt,
		currency: gift.currency,
		timeZone
	});
	const wording = rules.wording(terms, {
		organisation: data.organisation,
		publicCharity501c3: data.publicCharity501c3,
		donorName: data.donor.name,
		number: data.number,
		status: data.status,
		replacesNumber: data.replacesNumber,
		refundedAt: data.refundedAt,
		voidedBy: data.voidedBy
	});
	const number = formatReceiptNumber(data.number);
	const displayName = cleanText(data.organisation.displayName);

	const details: ReceiptDetail[] = [
		{ label: 'Received from', value: cleanText(data.donor.name) },
		{ label: 'E-mail', value: cleanText(data.donor.email) },
		{ label: 'Date received', value: wording.paidOn },
		{ label: 'Gift', value: cleanText(gift.description) },
		{ label: 'Amount received', value: wording.amount }
	].filter((row) => row.value !== '');
	if (data.voidedBy !== undefined) {
		details.push({
			label: 'Status',
			value: `Void: replaced by receipt No. ${formatReceiptNumber(data.voidedBy)}`
		});
	} else if (data.status === 'void') {
		details.push({ label: 'Status', value: 'Void: refunded in full' });
	} else if (wording.fairMarketValue !== null && wording.deductible !== null) {
		details.push(
			{ label: 'Goods or services provided', value: terms.goodsDescription },
			{ label: 'Estimated fair market value', value: wording.fairMarketValue },
			{ label: 'Deductible amount', value: wording.deductible }
		);
	} else {
		details.push({ label: 'Goods or services provided', value: 'None' });
	}

	return {
		number,
		issuedOn: formatReceiptDate(data.issuedAt, timeZone),
		terms,
		wording,
		displayName,
		postalAddress: data.organisation.postalAddress.split(/\r?\n/u).map(cleanText).filter(Boolean),
		details,
		footer: `${displayName || wording.organisationLines[0]} · Receipt No. ${number}`
	};
}

const hex = (value: string): RGB =>
	rgb(
		parseInt(value.slice(1, 3), 16) / 255,
		parseInt(value.slice(3, 5), 16) / 255,
		parseInt(value.slice(5, 7), 16) / 255
	);

// Tokens from tailwind.config.ts.
const COLOURS = {
	deep900: hex('#0c2b37'),
	deep800: hex('#103a4a'),
	lagoon700: hex('#19625a'),
	lagoon400: hex('#3fb5a2'),
	sand100: hex('#f5eedd'),
	coral400: hex('#e97c66'),
	ink700: hex('#2f3d44'),
	ink600: hex('#3d4d55'),
	ink500: hex('#4d5f68')
};

export type FaceName = 'heading' | 'body' | 'strong' | 'italic';

/** Latin first, then Latin Extended: each character is drawn by the first file that has it. */
const FONT_FILES: Record<FaceName, readonly string[]> = {
	heading: [merriweatherLatin, merriweatherLatinExt],
	body: [sourceSansLatin, sourceSansLatinExt],
	strong: [sourceSansStrongLatin, sourceSansStrongLatinExt],
	italic: [sourceSansItalicLatin, sourceSansItalicLatinExt]
};

export type ReceiptFonts = Record<FaceName, FontStack>;

/** Every text the receipt draws, by face, so that each face embeds only what it needs. */
function textsByFace(content: ReceiptContent): Record<FaceName, string[]> {
	const { wording } = content;
	return {
		heading: [wording.organisationLines[0], wording.title],
		strong: [
			content.displayName,
			`No. ${content.number}`,
			wording.notice ?? '',
			...content.details.map((d) => d.label)
		],
		body: [
			...content.postalAddress,
			...wording.organisationLines.slice(1),
			`Issued ${content.issuedOn}`,
			...content.details.map((d) => d.value),
			...wording.paragraphs,
			content.footer
		],
		italic: [wording.caution]
	};
}

export async function embedReceiptFonts(
	doc: PDFDocument,
	content: ReceiptContent
): Promise<ReceiptFonts> {
	return embedFaces(doc, textsByFace(content));
}

/** The bundled faces, each with only the files its texts need (other Ledger PDFs use it too). */
export async function embedFaces(
	doc: PDFDocument,
	texts: Record<FaceName, string[]>
): Promise<ReceiptFonts> {
	doc.registerFontkit(fontkit);
	return {
		heading: await embedStack(doc, FONT_FILES.heading, texts.heading),
		body: await embedStack(doc, FONT_FILES.body, texts.body),
		strong: await embedStack(doc, FONT_FILES.strong, texts.strong),
		italic: await embedStack(doc, FONT_FILES.italic, texts.italic)
	};
}

export interface ReceiptLayout {
	lines: PlacedLine[];
	/** The box every line stays within. */
	column: { left: number; right: number; bottom: number; top: number };
	/** The band behind a correction or void notice. */
	noticeBox: { x: number; y: number; width: number; height: number } | null;
	/** Horizontal rules, at these heights, across the column. */
	rules: number[];
	/** The factor the type was set at: 1, or smaller when the text had to shrink to fit. */
	scale: number;
}

const HEADER_SPLIT = 0.58;
const LABEL_WIDTH = 178;
const GUTTER = 18;
const SCALES = [1, 0.92, 0.84, 0.76];

type Pending = Omit<PlacedLine, 'y' | 'top' | 'bottom'> & { height: number };

function tryLayout(content: ReceiptContent, fonts: ReceiptFonts, scale: number): ReceiptLayout {
	const column = {
		left: MARGIN,
		right: PAGE_WIDTH - MARGIN,
		bottom: MARGIN,
		top: PAGE_HEIGHT - MARGIN
	};
	const width = column.right - column.left;
	const { wording } = content;

	/** `text` wrapped at one size within `maxWidth`, every line aligned in its box. */
	const set = (
		face: FaceName,
		text: string,
		size: number,
		x0: number,
		maxWidth: number,
		colour: RGB,
		options: { leading?: number; align?: 'left' | 'right' } = {}
	): Pending[] => {
		if (!text) return [];
		const stack = fonts[face];
		const s = size * scale;
		const { lines } = fitText(stack, text, {
			maxSize: s,
			minSize: s,
			floorSize: s,
			maxWidth,
			maxLines: Number.MAX_SAFE_INTEGER
		});
		return lines.map((line) => {
			const lineWidth = measure(stack, line, s);
			return {
				text: line,
				runs: runsOf(stack, line),
				x: options.align === 'right' ? x0 + maxWidth - lineWidth : x0,
				width: lineWidth,
				size: s,
				colour,
				height: s * (options.leading ?? 1.35)
			};
		});
	};

	const placed: PlacedLine[] = [];
	let cursor = column.top;
	const put = (lines: Pending[], after = 0) => {
		for (const line of lines) {
			const { height, ...rest } = line;
			const top = cursor;
			cursor -= height;
			placed.push({
				...rest,
				top,
				bottom: cursor,
				y: cursor + (height - line.size) / 2 + line.size * 0.22
			});
		}
		cursor -= after * scale;
	};

	// Header: the organisation on the left, the receipt's title and number on the right.
	const leftWidth = width * HEADER_SPLIT - GUTTER / 2;
	const rightX = column.left + width * HEADER_SPLIT + GUTTER / 2;
	const rightWidth = column.right - rightX;
	const [legalName, ...organisationRest] = wording.organisationLines;
	if (content.displayName && content.displayName !== legalName) {
		put(set('strong', content.displayName, 10, column.left, leftWidth, COLOURS.lagoon700), 2);
	}
	put(set('heading', legalName, 14, column.left, leftWidth, COLOURS.deep900, { leading: 1.3 }), 4);
	for (const line of content.postalAddress) {
		put(set('body', line, 9.5, column.left, leftWidth, COLOURS.ink700));
	}
	if (content.postalAddress.length > 0) cursor -= 4 * scale;
	for (const line of organisationRest) {
		put(set('body', line, 9.5, column.left, leftWidth, COLOURS.ink700), 2);
	}
	const leftBottom = cursor;

	cursor = column.top;
	const right = { align: 'right' as const };
	put(
		set('heading', wording.title, 17, rightX, rightWidth, COLOURS.deep900, {
			...right,
			leading: 1.25
		}),
		4
	);
	put(set('strong', `No. ${content.number}`, 12, rightX, rightWidth, COLOURS.lagoon700, right), 2);
	put(set('body', `Issued ${content.issuedOn}`, 9.5, rightX, rightWidth, COLOURS.ink600, right));

	cursor = Math.min(cursor, leftBottom) - 14 * scale;
	const rules = [cursor];
	cursor -= 16 * scale;

	let noticeBox: ReceiptLayout['noticeBox'] = null;
	if (wording.notice) {
		const pad = 8 * scale;
		const top = cursor;
		cursor -= pad;
		put(set('strong', wording.notice, 11, column.left + 12, width - 24, COLOURS.deep900));
		cursor -= pad;
		noticeBox = { x: column.left, y: cursor, width, height: top - cursor };
		cursor -= 16 * scale;
	}

	const valueX = column.left + LABEL_WIDTH + GUTTER;
	const valueWidth = column.right - valueX;
	for (const { label, value } of content.details) {
		const top = cursor;
		const first = placed.length;
		put(set('strong', label, 9.5, column.left, LABEL_WIDTH, COLOURS.ink500, { leading: 1.4 }));
		const labelLines = placed.slice(first);
		let bottom = cursor;
		cursor = top;
		const valueFirst = placed.length;
		put(set('body', value, 10.5, valueX, valueWidth, COLOURS.deep900, { leading: 1.4 }));
		// The label sits on the value's first baseline.
		const shift = (placed[valueFirst]?.y ?? labelLines[0].y) - labelLines[0].y;
		for (const line of labelLines) {
			line.y += shift;
			line.top += shift;
			line.bottom += shift;
		}
		bottom = Math.min(bottom + shift, cursor);
		cursor = bottom - 4 * scale;
	}

	cursor -= 10 * scale;
	rules.push(cursor);
	cursor -= 16 * scale;
	for (const paragraph of wording.paragraphs) {
		put(set('body', paragraph, 10.5, column.left, width, COLOURS.ink700, { leading: 1.45 }), 8);
	}
	cursor -= 6 * scale;
	put(set('italic', wording.caution, 9.5, column.left, width, COLOURS.ink600, { leading: 1.4 }));
	const flowBottom = cursor;

	// The footer sits on the bottom margin; the flow must end above it.
	const footer = set('body', content.footer, 8.5, column.left, width, COLOURS.ink500);
	const footerHeight = footer.reduce((h, l) => h + l.height, 0);
	cursor = column.bottom + footerHeight;
	const footerTop = cursor;
	put(footer);
	if (flowBottom < footerTop + 18 * scale) {
		throw new ReceiptOverflowError();
	}
	return { lines: placed, column, noticeBox, rules, scale };
}

export class ReceiptOverflowError extends RangeError {
	constructor() {
		super('The receipt’s text does not fit on one page even at the smallest type size');
		this.name = 'ReceiptOverflowError';
	}
}

/**
 * Where everything goes: the header (organisation left, title and number right), the notice of a
 * correction or void, the gift in label/value rows, the acknowledgment and the caution, and a
 * footer on the bottom margin. Text wraps within the margins; when it would run past one page the
 * type is set smaller, and when even the smallest size overflows a ReceiptOverflowError is thrown
 * rather than any required statement being cut.
 */
export function layoutReceipt(content: ReceiptContent, fonts: ReceiptFonts): ReceiptLayout {
	for (const scale of SCALES) {
		try {
			return tryLayout(content, fonts, scale);
		} catch (error) {
			if (!(error instanceof ReceiptOverflowError)) throw error;
		}
	}
	throw new ReceiptOverflowError();
}

/** The receipt as a PDF file: one US Letter portrait page, no external resources. */
export async function renderReceiptPdf(data: ReceiptPdfData): Promise<Uint8Array> {
	const content = receiptContent(data);
	const { wording } = content;
	const doc = await PDFDocument.create();
	const fonts = await embedReceiptFonts(doc, content);
	const layout = layoutReceipt(content, fonts);

	doc.setTitle(`${wording.title} No. ${content.number}`);
	doc.setAuthor(wording.organisationLines[0]);
	doc.setSubject(
		`${wording.amount} received on ${wording.paidOn}` +
			(data.status === 'void' ? ', refunded in full.' : '.')
	);
	doc.setCreator('Tideward');
	doc.setProducer('Tideward');
	doc.setLanguage('en-US');
	// The issue date, not the moment of rendering: a receipt rendered again says when it was issued.
	doc.setCreationDate(data.issuedAt);
	doc.setModificationDate(data.issuedAt);
	doc.catalog.getOrCreateViewerPreferences().setDisplayDocTitle(true);

	const page = doc.addPage([PAGE_WIDTH, PAGE_HEIGHT]);
	const { column } = layout;
	page.drawRectangle({
		x: 0,
		y: PAGE_HEIGHT - 10,
		width: PAGE_WIDTH,
		height: 10,
		color:
			data.status === 'void' || data.voidedBy !== undefined ? COLOURS.coral400 : COLOURS.deep800
	});
	for (const [i, y] of layout.rules.entries()) {
		page.drawLine({
			start: { x: column.left, y },
			end: { x: column.right, y },
			thickness: i === 0 ? 1.2 : 0.6,
			color: i === 0 ? COLOURS.lagoon400 : COLOURS.ink500
		});
	}
	if (layout.noticeBox) {
		page.drawRectangle({
			...layout.noticeBox,
			color: COLOURS.sand100,
			borderColor: COLOURS.coral400,
			borderWidth: 1
		});
	}
	drawLines(page, layout.lines);
	return doc.save();
}
