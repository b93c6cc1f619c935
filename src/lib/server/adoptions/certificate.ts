import merriweatherLatin from '@fontsource/merriweather/files/merriweather-latin-700-normal.woff?inline';
import merriweatherLatinExt from '@fontsource/merriweather/files/merriweather-latin-ext-700-normal.woff?inline';
import sourceSansItalicLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-400-italic.woff?inline';
import sourceSansItalicLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-400-italic.woff?inline';
import sourceSansLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-400-normal.woff?inline';
import sourceSansLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-400-normal.woff?inline';
import sourceSansStrongLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-600-normal.woff?inline';
import sourceSansStrongLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-600-normal.woff?inline';
import fontkit from '@pdf-lib/fontkit';
import { PDFDocument, rgb, type PDFFont, type PDFPage, type RGB } from 'pdf-lib';
import { formatDay } from '$lib/patients';

// The adoption certificate: one US Letter landscape page drawn with pdf-lib. The fonts are bundled
// into the server build (Vite `?inline`, as for the share cards) because @fontsource is a
// development dependency; fontkit reads WOFF 1.0 directly and pdf-lib embeds only the glyphs used.

/** What a certificate says; built from public patient fields and the supporter's own adoption. */
export interface CertificateData {
	patientName: string;
	speciesCommon: string;
	speciesScientific: string;
	/** The supporter, the gift's recipient, or "<class> at <school>" for a classroom. */
	adoptedBy: string;
	levelName: string;
	/** YYYY-MM-DD */
	startedOn: string;
	/** The organisation's public display name. */
	organisation: string;
	photoJpeg?: Uint8Array | null;
	/** The patient died in our care: the closing line remembers it instead of saying it lives. */
	remembered?: boolean;
}

/** US Letter landscape, in points. */
export const PAGE_WIDTH = 792;
export const PAGE_HEIGHT = 612;

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
	deep700: hex('#13485b'),
	lagoon700: hex('#19625a'),
	lagoon400: hex('#3fb5a2'),
	lagoon300: hex('#6fd1bf'),
	sand50: hex('#fbf8f1'),
	sand100: hex('#f5eedd'),
	sand300: hex('#dcc48e'),
	coral400: hex('#e97c66'),
	ink700: hex('#2f3d44'),
	ink600: hex('#3d4d55'),
	ink500: hex('#4d5f68')
};

type FaceName = 'heading' | 'body' | 'strong' | 'italic';

/** Latin first, then Latin Extended: each character is drawn by the first file that has it. */
const FONT_FILES: Record<FaceName, readonly string[]> = {
	heading: [merriweatherLatin, merriweatherLatinExt],
	body: [sourceSansLatin, sourceSansLatinExt],
	strong: [sourceSansStrongLatin, sourceSansStrongLatinExt],
	italic: [sourceSansItalicLatin, sourceSansItalicLatinExt]
};

function fromDataUrl(url: string): Uint8Array {
	return Buffer.from(url.slice(url.indexOf(',') + 1), 'base64');
}

interface EmbeddedFont {
	font: PDFFont;
	chars: ReadonlySet<number>;
}

/** The embedded fonts of one face, tried in order for each character. */
export type FontStack = readonly EmbeddedFont[];
export type CertificateFonts = Record<FaceName, FontStack>;

const isSpace = (char: string) => /\s/u.test(char);

/**
 * Embeds a face's Latin file, and its Latin Extended file only when `texts` need a character that
 * the Latin file lacks, so that a certificate carries no font it does not draw with.
 */
export async function embedStack(
	doc: PDFDocument,
	files: readonly string[],
	texts: readonly string[]
): Promise<FontStack> {
	const stack: EmbeddedFont[] = [];
	const wanted = new Set<number>();
	for (const text of texts) {
		for (const char of text) if (!isSpace(char)) wanted.add(char.codePointAt(0)!);
	}
	for (const [i, file] of files.entries()) {
		const missing = [...wanted].some((c) => !stack.some((f) => f.chars.has(c)));
		if (i > 0 && !missing) break;
		const font = await doc.embedFont(fromDataUrl(file), { subset: true });
		stack.push({ font, chars: new Set(font.getCharacterSet()) });
	}
	return stack;
}

/** One piece of a line drawn by one font. */
export interface Run {
	text: string;
	font: PDFFont;
}

/** The text cut into runs; characters that no shipped font has are left out, not drawn as boxes. */
export function runsOf(stack: FontStack, text: string): Run[] {
	const runs: Run[] = [];
	for (const char of text) {
		const last = runs.at(-1);
		const font = isSpace(char)
			? (last?.font ?? stack[0].font)
			: stack.find((f) => f.chars.has(char.codePointAt(0)!))?.font;
		if (!font) continue;
		if (last && last.font === font) last.text += char;
		else runs.push({ text: char, font });
	}
	return runs;
}

export function measure(stack: FontStack, text: string, size: number): number {
	return runsOf(stack, text).reduce((w, run) => w + run.font.widthOfTextAtSize(run.text, size), 0);
}

/** Widths at size 1, remembered: a width grows in proportion to the size. */
type UnitWidth = (text: string) => number;

/** A millionth of a point: scaling a width by the size is not exact in floating point. */
const SLACK = 1e-6;

function unitWidths(stack: FontStack): UnitWidth {
	const known = new Map<string, number>();
	return (text) => {
		let width = known.get(text);
		if (width === undefined) known.set(text, (width = measure(stack, text, 1)));
		return width;
	};
}

/** Cuts a word wider than the line into the longest pieces that fit (at least one character). */
function breakWord(width: UnitWidth, word: string, size: number, maxWidth: number): string[] {
	const chars = [...word];
	const pieces: string[] = [];
	while (chars.length > 0) {
		let lo = 1;
		let hi = chars.length;
		while (lo < hi) {
			const mid = Math.ceil((lo + hi) / 2);
			if (width(chars.slice(0, mid).join('')) * size <= maxWidth + SLACK) lo = mid;
			else hi = mid - 1;
		}
		pieces.push(chars.splice(0, lo).join(''));
	}
	return pieces;
}

/** Greedy word wrap; every line is at most `maxWidth` wide. */
function wrap(width: UnitWidth, text: string, size: number, maxWidth: number): string[] {
	const lines: string[] = [];
	let line = '';
	for (const word of text.split(' ').filter(Boolean)) {
		const candidate = line ? `${line} ${word}` : word;
		if (width(candidate) * size <= maxWidth + SLACK) {
			line = candidate;
			continue;
		}
		if (line) lines.push(line);
		const pieces = breakWord(width, word, size, maxWidth);
		line = pieces.pop() ?? '';
		lines.push(...pieces);
	}
	if (line) lines.push(line);
	return lines;
}

export interface FitOptions {
	maxSize: number;
	/** Shrink down to this size on one line before wrapping. */
	minSize: number;
	maxWidth: number;
	maxLines: number;
	/** Wrapped text may shrink further down to this size to stay within `maxLines`. */
	floorSize?: number;
}

const STEP = 0.5;

/**
 * The largest size (in half points) at which `text` fits one line of `maxWidth`, down to
 * `minSize`; else wrapped at the largest size that keeps it within `maxLines` (down to
 * `floorSize`); else wrapped at `floorSize` and cut after `maxLines` with "…".
 */
export function fitText(
	stack: FontStack,
	text: string,
	options: FitOptions
): { size: number; lines: string[] } {
	const { maxSize, minSize, maxWidth, maxLines } = options;
	const floorSize = options.floorSize ?? minSize;
	const width = unitWidths(stack);
	const unit = width(text);
	const oneLine =
		unit > 0 ? Math.floor(Math.min(maxSize, (maxWidth + SLACK) / unit) / STEP) * STEP : maxSize;
	if (oneLine >= minSize) return { size: oneLine, lines: [text] };
	for (let size = minSize; size >= floorSize; size -= STEP) {
		const lines = wrap(width, text, size, maxWidth);
		if (lines.length <= maxLines) return { size, lines };
	}
	const lines = wrap(width, text, floorSize, maxWidth).slice(0, maxLines);
	const last = [...(lines[maxLines - 1] ?? '')];
	while (last.length > 0 && width(`${last.join('')}…`) * floorSize > maxWidth + SLACK) last.pop();
	lines[maxLines - 1] = `${last.join('').trimEnd()}…`;
	return { size: floorSize, lines };
}

/** One line placed on the page; `y` is the baseline, `top` and `bottom` the line box. */
export interface PlacedLine {
	text: string;
	runs: Run[];
	x: number;
	y: number;
	width: number;
	size: number;
	top: number;
	bottom: number;
	colour: RGB;
}

export interface CertificateLayout {
	lines: PlacedLine[];
	/** The text column every line stays within. */
	column: { left: number; right: number; bottom: number; top: number };
	photo: { x: number; y: number; width: number; height: number } | null;
	/** The coloured panel behind the photo. */
	panel: { x: number; y: number; width: number; height: number } | null;
	mark: { x: number; y: number; size: number };
	divider: { x: number; y: number; width: number };
}

const FRAME = 20;
const PANEL = { x: FRAME + 6, width: 256 };
const PHOTO_INSET = 22;
const MARK_SIZE = 30;
const DIVIDER_WIDTH = 48;
/** The closing line sits above this; the blocks above it stay above `column.bottom`. */
const FOOTER_BOTTOM = FRAME + 18;

const clean = (text: string) => text.normalize('NFC').replace(/\s+/gu, ' ').trim();

/** The words of the certificate, in our own wording. */
export function certificateWording(data: CertificateData) {
	const patient = clean(data.patientName);
	const organisation = clean(data.organisation);
	return {
		eyebrow: organisation,
		title: 'Certificate of symbolic adoption',
		lead: 'This certificate records that',
		adoptedBy: clean(data.adoptedBy),
		hasAdopted: 'has adopted',
		patient,
		species: `a ${clean(data.speciesCommon)} in the care of ${organisation}`,
		scientific: clean(data.speciesScientific),
		levelLabel: 'ADOPTION LEVEL',
		level: clean(data.levelName),
		dateLabel: 'ADOPTED ON',
		date: formatDay(data.startedOn),
		footer: data.remembered
			? `A symbolic adoption in memory of ${patient}, who was cared for by ${organisation}.`
			: `A symbolic adoption: ${patient} remains a wild animal in our care or at sea.`
	};
}

export type CertificateWording = ReturnType<typeof certificateWording>;

const FACES: Record<keyof CertificateWording, FaceName> = {
	eyebrow: 'strong',
	title: 'heading',
	lead: 'body',
	adoptedBy: 'heading',
	hasAdopted: 'body',
	patient: 'heading',
	species: 'body',
	scientific: 'italic',
	levelLabel: 'strong',
	level: 'body',
	dateLabel: 'strong',
	date: 'body',
	footer: 'italic'
};

export async function embedCertificateFonts(
	doc: PDFDocument,
	wording: CertificateWording
): Promise<CertificateFonts> {
	doc.registerFontkit(fontkit);
	const textsOf = (face: FaceName) =>
		(Object.keys(FACES) as (keyof CertificateWording)[])
			.filter((key) => FACES[key] === face)
			.map((key) => wording[key]);
	return {
		heading: await embedStack(doc, FONT_FILES.heading, textsOf('heading')),
		body: await embedStack(doc, FONT_FILES.body, textsOf('body')),
		strong: await embedStack(doc, FONT_FILES.strong, textsOf('strong')),
		italic: await embedStack(doc, FONT_FILES.italic, textsOf('italic'))
	};
}

interface Block {
	key: keyof CertificateWording;
	fit: Omit<FitOptions, 'maxWidth'>;
	colour: RGB;
	/** Line height as a multiple of the size. */
	leading: number;
	/** Space below the block. */
	after: number;
}

const BLOCKS: Block[] = [
	{
		key: 'eyebrow',
		fit: { maxSize: 11, minSize: 9, maxLines: 2 },
		colour: COLOURS.lagoon700,
		leading: 1.3,
		after: 8
	},
	{
		key: 'title',
		fit: { maxSize: 28, minSize: 22, maxLines: 2, floorSize: 18 },
		colour: COLOURS.deep900,
		leading: 1.2,
		after: 26
	},
	{
		key: 'lead',
		fit: { maxSize: 14, minSize: 12, maxLines: 1 },
		colour: COLOURS.ink700,
		leading: 1.35,
		after: 6
	},
	{
		key: 'adoptedBy',
		fit: { maxSize: 30, minSize: 18, maxLines: 3, floorSize: 11 },
		colour: COLOURS.deep800,
		leading: 1.25,
		after: 6
	},
	{
		key: 'hasAdopted',
		fit: { maxSize: 14, minSize: 12, maxLines: 1 },
		colour: COLOURS.ink700,
		leading: 1.35,
		after: 6
	},
	{
		key: 'patient',
		fit: { maxSize: 34, minSize: 20, maxLines: 2, floorSize: 14 },
		colour: COLOURS.lagoon700,
		leading: 1.2,
		after: 8
	},
	{
		key: 'species',
		fit: { maxSize: 14, minSize: 12, maxLines: 3, floorSize: 10 },
		colour: COLOURS.ink700,
		leading: 1.35,
		after: 2
	},
	{
		key: 'scientific',
		fit: { maxSize: 13, minSize: 10, maxLines: 1 },
		colour: COLOURS.ink600,
		leading: 1.35,
		after: 22
	}
];

const DETAIL_LABEL: Omit<Block, 'key'> = {
	fit: { maxSize: 9.5, minSize: 8, maxLines: 1 },
	colour: COLOURS.ink500,
	leading: 1.4,
	after: 2
};
const FOOTER: Omit<Block, 'key'> = {
	fit: { maxSize: 10.5, minSize: 8, maxLines: 2, floorSize: 7 },
	colour: COLOURS.ink600,
	leading: 1.3,
	after: 0
};
const DETAIL_VALUE: Omit<Block, 'key'> = {
	fit: { maxSize: 14, minSize: 11, maxLines: 2, floorSize: 9 },
	colour: COLOURS.deep900,
	leading: 1.3,
	after: 0
};

/**
 * Where everything goes. Text is centred in its column, shrunk to fit its width and then wrapped,
 * and the whole stack of blocks is centred vertically between the footer and the top of the frame.
 */
export function layoutCertificate(
	wording: CertificateWording,
	fonts: CertificateFonts,
	photo: { width: number; height: number } | null
): CertificateLayout {
	const withPhoto = photo !== null && photo.width > 0 && photo.height > 0;
	const left = withPhoto ? PANEL.x + PANEL.width + 28 : FRAME + 72;
	const right = PAGE_WIDTH - FRAME - (withPhoto ? 28 : 72);
	const column = { left, right, bottom: FOOTER_BOTTOM + 36, top: PAGE_HEIGHT - FRAME - 28 };
	const centre = (left + right) / 2;
	const width = right - left;

	type Pending = Omit<PlacedLine, 'y' | 'top' | 'bottom'> & { height: number };
	const place = (
		stack: FontStack,
		text: string,
		block: Omit<Block, 'key'>,
		x0: number,
		w: number
	) => {
		const { size, lines } = fitText(stack, text, { ...block.fit, maxWidth: w });
		return lines.map((line): Pending => {
			const lineWidth = measure(stack, line, size);
			return {
				text: line,
				runs: runsOf(stack, line),
				x: x0 + (w - lineWidth) / 2,
				width: lineWidth,
				size,
				colour: block.colour,
				height: size * block.leading
			};
		});
	};

	// Heights first, to centre the whole stack.
	const blocks = BLOCKS.map((block) => ({
		block,
		lines: place(fonts[FACES[block.key]], wording[block.key], block, left, width)
	}));
	const half = (width - 24) / 2;
	const details = [
		{ label: wording.levelLabel, value: wording.level, x0: left },
		{ label: wording.dateLabel, value: wording.date, x0: left + half + 24 }
	].map(({ label, value, x0 }) => ({
		label: place(fonts.strong, label, DETAIL_LABEL, x0, half),
		value: place(fonts.body, value, DETAIL_VALUE, x0, half)
	}));
	const sum = (lines: Pending[]) => lines.reduce((h, l) => h + l.height, 0);
	const detailsHeight = Math.max(
		...details.map((d) => sum(d.label) + DETAIL_LABEL.after + sum(d.value))
	);
	const markHeight = MARK_SIZE + 12;
	const total =
		markHeight + blocks.reduce((h, b) => h + sum(b.lines) + b.block.after, 0) + detailsHeight;

	let cursor = Math.min(column.top, column.bottom + (column.top - column.bottom + total) / 2);
	const placed: PlacedLine[] = [];
	const put = (line: Pending) => {
		const { height, ...rest } = line;
		const top = cursor;
		cursor -= height;
		// Baseline at the line box's bottom, lifted by the part of the leading below the text.
		placed.push({
			...rest,
			top,
			bottom: cursor,
			y: cursor + (height - line.size) / 2 + line.size * 0.22
		});
	};

	const mark = { x: centre - MARK_SIZE / 2, y: cursor, size: MARK_SIZE };
	cursor -= markHeight;
	let divider = { x: centre - DIVIDER_WIDTH / 2, y: cursor, width: DIVIDER_WIDTH };
	for (const { block, lines } of blocks) {
		lines.forEach(put);
		if (block.key === 'title') divider = { ...divider, y: cursor - block.after / 2 + 3 };
		cursor -= block.after;
	}
	const detailsTop = cursor;
	for (const detail of details) {
		cursor = detailsTop;
		detail.label.forEach(put);
		cursor -= DETAIL_LABEL.after;
		detail.value.forEach(put);
	}
	const footer = place(fonts.italic, wording.footer, FOOTER, left, width);
	cursor = FOOTER_BOTTOM + sum(footer);
	footer.forEach(put);

	let photoBox: CertificateLayout['photo'] = null;
	let panel: CertificateLayout['panel'] = null;
	if (withPhoto) {
		panel = { x: PANEL.x, y: FRAME + 6, width: PANEL.width, height: PAGE_HEIGHT - 2 * (FRAME + 6) };
		const boxWidth = PANEL.width - 2 * PHOTO_INSET;
		const boxHeight = panel.height - 2 * PHOTO_INSET;
		const scale = Math.min(boxWidth / photo.width, boxHeight / photo.height);
		const w = photo.width * scale;
		const h = photo.height * scale;
		photoBox = {
			x: panel.x + (panel.width - w) / 2,
			y: panel.y + (panel.height - h) / 2,
			width: w,
			height: h
		};
	}
	return { lines: placed, column, photo: photoBox, panel, mark, divider };
}

// The Tideward mark (src/lib/components/Mark.svelte), on a 32-unit grid.
const MARK_TILE = 'M7 0H25A7 7 0 0 1 32 7V25A7 7 0 0 1 25 32H7A7 7 0 0 1 0 25V7A7 7 0 0 1 7 0Z';
const MARK_SHELL =
	'M5 21.5C5 13.5 10.5 7.5 17 7.5c5.2 0 9 3.6 9 8.2 0 3.3-2.5 5.3-5.2 5.3-2.3 0-4-1.6-4-3.7 0-1.7 1.3-3 3-3';
const MARK_HEAD = 'M9.5 21.5c0-4.6 3-8.3 7-8.6';
const MARK_WAVE =
	'M4.5 25.5c2.3 0 2.3-1.6 4.6-1.6s2.3 1.6 4.6 1.6 2.3-1.6 4.6-1.6 2.3 1.6 4.6 1.6 2.3-1.6 4.6-1.6';
const WAVE = 'M0 3c4 0 4-3 8-3s4 3 8 3 4-3 8-3 4 3 8 3 4-3 8-3 4 3 8 3';

/** The certificate as a PDF file: one US Letter landscape page, no external resources. */
export async function certificatePdf(data: CertificateData): Promise<Uint8Array> {
	const wording = certificateWording(data);
	const doc = await PDFDocument.create();
	const fonts = await embedCertificateFonts(doc, wording);
	const image = data.photoJpeg?.length ? await doc.embedJpg(data.photoJpeg) : null;
	const layout = layoutCertificate(wording, fonts, image);

	doc.setTitle(`${wording.title}: ${wording.patient}`);
	doc.setAuthor(wording.eyebrow);
	doc.setSubject(`${wording.adoptedBy} has adopted ${wording.patient} (${wording.level}).`);
	doc.setCreator('Tideward');
	doc.setProducer('Tideward');
	doc.setLanguage('en-US');
	doc.catalog.getOrCreateViewerPreferences().setDisplayDocTitle(true);

	const page = doc.addPage([PAGE_WIDTH, PAGE_HEIGHT]);
	page.drawRectangle({ x: 0, y: 0, width: PAGE_WIDTH, height: PAGE_HEIGHT, color: COLOURS.sand50 });
	page.drawRectangle({
		x: FRAME,
		y: FRAME,
		width: PAGE_WIDTH - 2 * FRAME,
		height: PAGE_HEIGHT - 2 * FRAME,
		borderColor: COLOURS.deep800,
		borderWidth: 1.5
	});
	page.drawRectangle({
		x: FRAME + 6,
		y: FRAME + 6,
		width: PAGE_WIDTH - 2 * (FRAME + 6),
		height: PAGE_HEIGHT - 2 * (FRAME + 6),
		borderColor: COLOURS.lagoon400,
		borderWidth: 0.6
	});
	if (layout.panel) page.drawRectangle({ ...layout.panel, color: COLOURS.deep800 });
	if (image && layout.photo) {
		const { x, y, width, height } = layout.photo;
		page.drawRectangle({
			x: x - 4,
			y: y - 4,
			width: width + 8,
			height: height + 8,
			color: COLOURS.sand100
		});
		page.drawImage(image, layout.photo);
	}

	const { mark, divider } = layout;
	const scale = mark.size / 32;
	const at = { x: mark.x, y: mark.y, scale };
	page.drawSvgPath(MARK_TILE, { ...at, color: COLOURS.deep800 });
	page.drawSvgPath(MARK_SHELL, {
		...at,
		borderColor: COLOURS.sand100,
		borderWidth: 2.6,
		borderLineCap: 1
	});
	page.drawSvgPath(MARK_HEAD, {
		...at,
		borderColor: COLOURS.lagoon300,
		borderWidth: 2.2,
		borderLineCap: 1
	});
	page.drawSvgPath(MARK_WAVE, {
		...at,
		borderColor: data.remembered ? COLOURS.sand300 : COLOURS.coral400,
		borderWidth: 2,
		borderLineCap: 1
	});
	page.drawSvgPath(WAVE, {
		x: divider.x,
		y: divider.y,
		scale: divider.width / 48,
		borderColor: data.remembered ? COLOURS.sand300 : COLOURS.coral400,
		borderWidth: 1.6,
		borderLineCap: 1
	});

	drawLines(page, layout.lines);
	return doc.save();
}

/** Draws laid-out lines, each run in its own font (the receipt PDF draws the same way). */
export function drawLines(page: PDFPage, lines: readonly PlacedLine[]) {
	for (const line of lines) {
		let x = line.x;
		for (const run of line.runs) {
			page.drawText(run.text, {
				x,
				y: line.y,
				size: line.size,
				font: run.font,
				color: line.colour
			});
			x += run.font.widthOfTextAtSize(run.text, line.size);
		}
	}
}
