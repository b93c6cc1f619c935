import opentype from 'opentype.js';

// Text for share images is drawn as SVG paths from fonts that ship with the app (opentype.js
// reads their WOFF files), so a PNG looks the same on a server with no system fonts at all.

export type Font = opentype.Font;
/** Fonts tried in order for each character, e.g. Latin then Latin Extended subsets. */
export type FontStack = readonly Font[];

export function loadWoff(woff: Uint8Array): Font {
	if (Buffer.from(woff.subarray(0, 4)).toString('latin1') !== 'wOFF') {
		throw new Error('Not a WOFF 1.0 font.');
	}
	const bytes = woff.buffer.slice(woff.byteOffset, woff.byteOffset + woff.byteLength);
	return opentype.parse(bytes as ArrayBuffer);
}

/** The text cut into runs, each drawn by the first font that has its characters. */
function runs(stack: FontStack, text: string): { font: Font; text: string }[] {
	const out: { font: Font; text: string }[] = [];
	for (const char of text) {
		const font = /\s/u.test(char)
			? (out.at(-1)?.font ?? stack[0])
			: stack.find((f) => f.charToGlyphIndex(char) > 0);
		if (!font) continue; // no shipped font has it: leave it out rather than draw a box
		const last = out.at(-1);
		if (last && last.font === font) last.text += char;
		else out.push({ font, text: char });
	}
	return out;
}

export function measureText(stack: FontStack, text: string, size: number): number {
	return runs(stack, text).reduce((w, run) => w + run.font.getAdvanceWidth(run.text, size), 0);
}

/** SVG path data for `text` with its baseline starting at (x, y). */
export function textPath(
	stack: FontStack,
	text: string,
	x: number,
	y: number,
	size: number
): string {
	let pen = x;
	const parts: string[] = [];
	for (const run of runs(stack, text)) {
		const d = run.font.getPath(run.text, pen, y, size).toPathData(2);
		if (d) parts.push(d);
		pen += run.font.getAdvanceWidth(run.text, size);
	}
	return parts.join('');
}

/** Words wrapped into at most `maxLines` lines of `maxWidth`; a cut text ends with "…". */
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
