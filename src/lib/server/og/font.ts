import { inflateSync } from 'node:zlib';

// Text for share images is drawn as SVG paths from fonts that ship with the app, so a PNG looks
// the same on a server with no system fonts at all. This reads the TrueType outlines of WOFF 1.0
// files (W3C WOFF File Format 1.0; OpenType spec: cmap, glyf, hmtx, loca, head, hhea, maxp).
// Kerning and ligatures (GPOS, GSUB) are not applied; at share-card sizes that is acceptable.

export interface Font {
	unitsPerEm: number;
	ascender: number;
	descender: number;
	glyphIndex(codePoint: number): number;
	advance(glyph: number): number;
	/** Outline contours in font units (y up); each point [x, y, onCurve]. */
	contours(glyph: number): Point[][];
}

type Point = [x: number, y: number, onCurve: boolean];

/** The tables of a WOFF 1.0 file, decompressed. */
export function readWoffTables(woff: Uint8Array): Map<string, Buffer> {
	const data = Buffer.from(woff.buffer, woff.byteOffset, woff.byteLength);
	if (data.toString('latin1', 0, 4) !== 'wOFF') throw new Error('Not a WOFF 1.0 font.');
	const numTables = data.readUInt16BE(12);
	const tables = new Map<string, Buffer>();
	for (let i = 0; i < numTables; i++) {
		const entry = 44 + i * 20;
		const tag = data.toString('latin1', entry, entry + 4);
		const offset = data.readUInt32BE(entry + 4);
		const compLength = data.readUInt32BE(entry + 8);
		const origLength = data.readUInt32BE(entry + 12);
		const raw = data.subarray(offset, offset + compLength);
		tables.set(tag, compLength < origLength ? inflateSync(raw) : Buffer.from(raw));
	}
	return tables;
}

function cmapLookup(cmap: Buffer): (codePoint: number) => number {
	const count = cmap.readUInt16BE(2);
	let format4: number | undefined;
	let format12: number | undefined;
	for (let i = 0; i < count; i++) {
		const platform = cmap.readUInt16BE(4 + i * 8);
		const encoding = cmap.readUInt16BE(6 + i * 8);
		const offset = cmap.readUInt32BE(8 + i * 8);
		const format = cmap.readUInt16BE(offset);
		const unicode = platform === 0 || (platform === 3 && (encoding === 1 || encoding === 10));
		if (!unicode) continue;
		if (format === 12) format12 ??= offset;
		if (format === 4) format4 ??= offset;
	}
	if (format12 !== undefined) {
		const base = format12;
		const groups = cmap.readUInt32BE(base + 12);
		return (c) => {
			for (let g = 0; g < groups; g++) {
				const at = base + 16 + g * 12;
				const start = cmap.readUInt32BE(at);
				const end = cmap.readUInt32BE(at + 4);
				if (c >= start && c <= end) return cmap.readUInt32BE(at + 8) + (c - start);
			}
			return 0;
		};
	}
	if (format4 === undefined) throw new Error('The font has no Unicode character map.');
	const base = format4;
	const segments = cmap.readUInt16BE(base + 6) / 2;
	const ends = base + 14;
	const starts = ends + segments * 2 + 2;
	const deltas = starts + segments * 2;
	const rangeOffsets = deltas + segments * 2;
	return (c) => {
		if (c > 0xffff) return 0;
		for (let s = 0; s < segments; s++) {
			if (cmap.readUInt16BE(ends + s * 2) < c) continue;
			const start = cmap.readUInt16BE(starts + s * 2);
			if (start > c) return 0;
			const delta = cmap.readInt16BE(deltas + s * 2);
			const rangeAt = rangeOffsets + s * 2;
			const rangeOffset = cmap.readUInt16BE(rangeAt);
			if (rangeOffset === 0) return (c + delta) & 0xffff;
			const glyph = cmap.readUInt16BE(rangeAt + rangeOffset + (c - start) * 2);
			return glyph === 0 ? 0 : (glyph + delta) & 0xffff;
		}
		return 0;
	};
}

const ON_CURVE = 0x01;
const X_SHORT = 0x02;
const Y_SHORT = 0x04;
const REPEAT = 0x08;
const X_SAME_OR_POSITIVE = 0x10;
const Y_SAME_OR_POSITIVE = 0x20;

const ARGS_ARE_WORDS = 0x0001;
const ARGS_ARE_XY = 0x0002;
const HAS_SCALE = 0x0008;
const MORE_COMPONENTS = 0x0020;
const HAS_XY_SCALE = 0x0040;
const HAS_2X2 = 0x0080;

/** A TrueType-flavoured WOFF font (the @fontsource files are). */
export function loadWoff(woff: Uint8Array): Font {
	const tables = readWoffTables(woff);
	const table = (tag: string) => {
		const t = tables.get(tag);
		if (!t) throw new Error(`The font has no ${tag} table (only TrueType outlines are read).`);
		return t;
	};
	const head = table('head');
	const hhea = table('hhea');
	const maxp = table('maxp');
	const hmtx = table('hmtx');
	const loca = table('loca');
	const glyf = table('glyf');
	const unitsPerEm = head.readUInt16BE(18);
	const longLoca = head.readInt16BE(50) === 1;
	const metrics = hhea.readUInt16BE(34);
	const numGlyphs = maxp.readUInt16BE(4);
	const lookup = cmapLookup(table('cmap'));

	const glyphRange = (glyph: number): [number, number] =>
		longLoca
			? [loca.readUInt32BE(glyph * 4), loca.readUInt32BE(glyph * 4 + 4)]
			: [loca.readUInt16BE(glyph * 2) * 2, loca.readUInt16BE(glyph * 2 + 2) * 2];

	const contours = (glyph: number, depth = 0): Point[][] => {
		if (glyph < 0 || glyph >= numGlyphs || depth > 8) return [];
		const [start, end] = glyphRange(glyph);
		if (end <= start) return [];
		const g = glyf.subarray(start, end);
		const count = g.readInt16BE(0);
		if (count >= 0) return simpleGlyph(g, count);
		const result: Point[][] = [];
		let at = 10;
		let flags: number;
		do {
			flags = g.readUInt16BE(at);
			const component = g.readUInt16BE(at + 2);
			at += 4;
			let dx = 0;
			let dy = 0;
			if (flags & ARGS_ARE_WORDS) {
				if (flags & ARGS_ARE_XY) [dx, dy] = [g.readInt16BE(at), g.readInt16BE(at + 2)];
				at += 4;
			} else {
				if (flags & ARGS_ARE_XY) [dx, dy] = [g.readInt8(at), g.readInt8(at + 1)];
				at += 2;
			}
			let [a, b, c, d] = [1, 0, 0, 1];
			const f2dot14 = (offset: number) => g.readInt16BE(offset) / 16384;
			if (flags & HAS_SCALE) {
				a = d = f2dot14(at);
				at += 2;
			} else if (flags & HAS_XY_SCALE) {
				[a, d] = [f2dot14(at), f2dot14(at + 2)];
				at += 4;
			} else if (flags & HAS_2X2) {
				[a, b, c, d] = [f2dot14(at), f2dot14(at + 2), f2dot14(at + 4), f2dot14(at + 6)];
				at += 8;
			}
			for (const contour of contours(component, depth + 1)) {
				result.push(
					contour.map(([x, y, on]) => [a * x + c * y + dx, b * x + d * y + dy, on] as Point)
				);
			}
		} while (flags & MORE_COMPONENTS);
		return result;
	};

	return {
		unitsPerEm,
		ascender: hhea.readInt16BE(4),
		descender: hhea.readInt16BE(6),
		glyphIndex: lookup,
		advance: (glyph) => hmtx.readUInt16BE(Math.min(glyph, metrics - 1) * 4),
		contours: (glyph) => contours(glyph)
	};
}

function simpleGlyph(g: Buffer, count: number): Point[][] {
	const endPoints: number[] = [];
	for (let i = 0; i < count; i++) endPoints.push(g.readUInt16BE(10 + i * 2));
	const total = count === 0 ? 0 : endPoints[count - 1] + 1;
	let at = 10 + count * 2;
	at += 2 + g.readUInt16BE(at); // instructions
	const flags: number[] = [];
	while (flags.length < total) {
		const flag = g.readUInt8(at++);
		flags.push(flag);
		if (flag & REPEAT) {
			let repeat = g.readUInt8(at++);
			while (repeat-- > 0) flags.push(flag);
		}
	}
	const coordinates = (short: number, same: number): number[] => {
		const values: number[] = [];
		let value = 0;
		for (const flag of flags.slice(0, total)) {
			if (flag & short) {
				const delta = g.readUInt8(at++);
				value += flag & same ? delta : -delta;
			} else if (!(flag & same)) {
				value += g.readInt16BE(at);
				at += 2;
			}
			values.push(value);
		}
		return values;
	};
	const xs = coordinates(X_SHORT, X_SAME_OR_POSITIVE);
	const ys = coordinates(Y_SHORT, Y_SAME_OR_POSITIVE);
	const result: Point[][] = [];
	let first = 0;
	for (const last of endPoints) {
		const contour: Point[] = [];
		for (let i = first; i <= last; i++) contour.push([xs[i], ys[i], (flags[i] & ON_CURVE) !== 0]);
		result.push(contour);
		first = last + 1;
	}
	return result;
}

const round = (n: number) => Math.round(n * 100) / 100;

/** One contour as SVG path commands, quadratic segments as in TrueType. */
function contourPath(points: Point[], place: (x: number, y: number) => [number, number]): string {
	if (points.length === 0) return '';
	const at = (p: Point): [number, number] => place(p[0], p[1]);
	const mid = (p: Point, q: Point): Point => [(p[0] + q[0]) / 2, (p[1] + q[1]) / 2, true];
	// Start on a point that lies on the curve (or between two control points).
	let startIndex = points.findIndex((p) => p[2]);
	let start: Point;
	if (startIndex === -1) {
		start = mid(points[points.length - 1], points[0]);
		startIndex = points.length - 1;
	} else {
		start = points[startIndex];
	}
	const xy = (p: Point) => at(p).map(round).join(' ');
	let d = `M${xy(start)}`;
	let control: Point | null = null;
	for (let step = 1; step <= points.length; step++) {
		const p = points[(startIndex + step) % points.length];
		if (p[2]) {
			d += control ? `Q${xy(control)} ${xy(p)}` : `L${xy(p)}`;
			control = null;
		} else if (control) {
			const implied = mid(control, p);
			d += `Q${xy(control)} ${xy(implied)}`;
			control = p;
		} else {
			control = p;
		}
	}
	if (control) d += `Q${xy(control)} ${xy(start)}`;
	return `${d}Z`;
}

/** A run of fonts tried in order for each character (e.g. Latin, then Latin Extended). */
export type FontStack = readonly Font[];

function glyphFor(stack: FontStack, codePoint: number): { font: Font; glyph: number } | null {
	for (const font of stack) {
		const glyph = font.glyphIndex(codePoint);
		if (glyph !== 0) return { font, glyph };
	}
	return null;
}

const SPACE_LIKE = /\s/u;

/** Width of `text` in pixels at `size`. Characters no font has are skipped, as when drawn. */
export function measureText(stack: FontStack, text: string, size: number): number {
	let width = 0;
	for (const char of text.normalize('NFC')) {
		const codePoint = SPACE_LIKE.test(char) ? 0x20 : char.codePointAt(0)!;
		const found = glyphFor(stack, codePoint);
		if (found) width += (found.font.advance(found.glyph) * size) / found.font.unitsPerEm;
	}
	return width;
}

/** `text` as one SVG path `d`, its baseline starting at (x, y), `size` pixels to the em. */
export function textPath(
	stack: FontStack,
	text: string,
	x: number,
	y: number,
	size: number
): string {
	let pen = x;
	const parts: string[] = [];
	for (const char of text.normalize('NFC')) {
		const codePoint = SPACE_LIKE.test(char) ? 0x20 : char.codePointAt(0)!;
		const found = glyphFor(stack, codePoint);
		if (!found) continue;
		const scale = size / found.font.unitsPerEm;
		const origin = pen;
		const place = (gx: number, gy: number): [number, number] => [
			origin + gx * scale,
			y - gy * scale
		];
		for (const contour of found.font.contours(found.glyph)) parts.push(contourPath(contour, place));
		pen += found.font.advance(found.glyph) * scale;
	}
	return parts.join('');
}

/**
 * Greedy word wrap into at most `maxLines` lines no wider than `maxWidth`; the last line ends in
 * an ellipsis when the text does not fit. A single word wider than a line is cut.
 */
export function wrapText(
	stack: FontStack,
	text: string,
	size: number,
	maxWidth: number,
	maxLines: number
): string[] {
	const words = text.trim().split(/\s+/).filter(Boolean);
	const fits = (candidate: string) => measureText(stack, candidate, size) <= maxWidth;
	const lines: string[] = [];
	let line = '';
	let truncated = false;
	for (const word of words) {
		const candidate = line ? `${line} ${word}` : word;
		if (fits(candidate)) {
			line = candidate;
			continue;
		}
		if (line) lines.push(line);
		line = '';
		if (lines.length === maxLines) {
			truncated = true;
			break;
		}
		if (fits(word)) {
			line = word;
		} else {
			lines.push(shorten(word, fits));
			truncated = true;
			break;
		}
	}
	if (line) {
		if (lines.length < maxLines) lines.push(line);
		else truncated = true;
	}
	if (truncated && lines.length > 0) {
		lines[lines.length - 1] = `${shorten(lines[lines.length - 1], (t) => fits(`${t}…`))}…`;
	}
	return lines;
}

/** The longest start of `text` (whole characters) that passes `fits`. */
function shorten(text: string, fits: (candidate: string) => boolean): string {
	const chars = Array.from(text);
	while (chars.length > 0 && !fits(chars.join(''))) chars.pop();
	return chars.join('').trimEnd();
}
