import { inflateSync } from 'node:zlib';

export type ImageKind = 'jpeg' | 'png' | 'webp';

export type StructureProblem =
	| { kind: 'markup'; signature: string }
	| { kind: 'trailing'; extraBytes: number }
	| { kind: 'malformed'; detail: string };

// Markup or script that has no business inside a photo: what a browser, PHP or an XSS payload
// would act on if the file were ever served as something else. Short or common byte sequences
// are left out (`<svg` only with a delimiter after it) to keep chance matches in binary metadata
// (ICC profiles, maker notes) practically impossible.
const SIGNATURES =
	/<script|<html|<body|<iframe|<object|<embed|<svg[\s/>]|<!doctype|<\?php|javascript:|vbscript:/i;

const MAX_TEXT_INFLATE = 1024 * 1024;

/**
 * Walks the container of a JPEG, PNG or WebP file and reports the first problem: data after the
 * image's end, markup or script signatures outside the compressed pixel data, or a broken
 * structure. Compressed pixel data (JPEG scans, PNG IDAT, WebP VP8/VP8L/ALPH) is not searched:
 * it is near-random, so a text search there would refuse about one genuine photo in ten thousand
 * by chance, and it is never served (every variant is re-encoded from decoded pixels).
 */
export function findStructureProblem(bytes: Buffer, kind: ImageKind): StructureProblem | null {
	const walked =
		kind === 'jpeg' ? walkJpeg(bytes) : kind === 'png' ? walkPng(bytes) : walkWebp(bytes);
	if ('detail' in walked) return { kind: 'malformed', detail: walked.detail };
	for (const region of walked.regions) {
		const text = (Buffer.isBuffer(region) ? region : bytes.subarray(region[0], region[1])).toString(
			'latin1'
		);
		const match = SIGNATURES.exec(text);
		if (match) return { kind: 'markup', signature: match[0].trim().toLowerCase() };
	}
	if (walked.end < bytes.length) {
		const trailing = bytes.subarray(walked.end);
		const match = SIGNATURES.exec(trailing.toString('latin1'));
		if (match) return { kind: 'markup', signature: match[0].trim().toLowerCase() };
		return { kind: 'trailing', extraBytes: trailing.length };
	}
	return null;
}

type Region = [number, number] | Buffer;
type Walk = { end: number; regions: Region[] } | { detail: string };

function walkJpeg(b: Buffer): Walk {
	if (b.length < 4 || b[0] !== 0xff || b[1] !== 0xd8) return { detail: 'no JPEG start marker' };
	const regions: Region[] = [];
	let i = 2;
	for (;;) {
		if (i >= b.length) return { detail: 'the file ends before the JPEG end marker' };
		if (b[i] !== 0xff) return { detail: `unexpected byte at offset ${i}` };
		while (b[i] === 0xff && i < b.length) i++;
		if (i >= b.length) return { detail: 'the file ends before the JPEG end marker' };
		const marker = b[i++];
		if (marker === 0xd9) return { end: i, regions };
		if (marker === 0x01 || (marker >= 0xd0 && marker <= 0xd7)) continue;
		if (marker === 0x00 || marker === 0xd8) return { detail: `stray marker at offset ${i - 1}` };
		if (i + 2 > b.length) return { detail: 'the file ends inside a JPEG segment' };
		const length = b.readUInt16BE(i);
		if (length < 2 || i + length > b.length) return { detail: 'a JPEG segment runs past the end' };
		regions.push([i + 2, i + length]);
		i += length;
		if (marker === 0xda) {
			// Entropy-coded data: 0xFF is only ever followed by a stuffed 0x00 or a restart marker
			// until the next real marker.
			for (;;) {
				i = b.indexOf(0xff, i);
				if (i < 0 || i + 1 >= b.length) {
					return { detail: 'the file ends before the JPEG end marker' };
				}
				const next = b[i + 1];
				if (next === 0x00 || (next >= 0xd0 && next <= 0xd7)) i += 2;
				else break;
			}
		}
	}
}

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
const PNG_PIXEL_CHUNKS = new Set(['IDAT', 'fdAT']);

function walkPng(b: Buffer): Walk {
	if (b.length < 8 || !b.subarray(0, 8).equals(PNG_SIGNATURE)) {
		return { detail: 'no PNG signature' };
	}
	const regions: Region[] = [];
	let i = 8;
	for (;;) {
		if (i + 12 > b.length) return { detail: 'the file ends before the PNG end chunk' };
		const length = b.readUInt32BE(i);
		const type = b.toString('latin1', i + 4, i + 8);
		if (!/^[A-Za-z]{4}$/.test(type)) return { detail: `invalid PNG chunk at offset ${i}` };
		const dataStart = i + 8;
		const dataEnd = dataStart + length;
		if (dataEnd + 4 > b.length) return { detail: `the PNG ${type} chunk runs past the end` };
		if (!PNG_PIXEL_CHUNKS.has(type)) {
			regions.push([dataStart, dataEnd]);
			const text = compressedPngText(type, b.subarray(dataStart, dataEnd));
			if (text) regions.push(text);
		}
		i = dataEnd + 4;
		if (type === 'IEND') return { end: i, regions };
	}
}

/** The inflated text of a zTXt or compressed iTXt chunk, so that markup cannot hide in zlib. */
function compressedPngText(type: string, data: Buffer): Buffer | null {
	const keywordEnd = data.indexOf(0);
	if (keywordEnd < 0) return null;
	let start: number;
	if (type === 'zTXt') start = keywordEnd + 2;
	else if (type === 'iTXt' && data[keywordEnd + 1] === 1) {
		const languageEnd = data.indexOf(0, keywordEnd + 3);
		const translatedEnd = languageEnd < 0 ? -1 : data.indexOf(0, languageEnd + 1);
		if (translatedEnd < 0) return null;
		start = translatedEnd + 1;
	} else return null;
	try {
		return inflateSync(data.subarray(start), { maxOutputLength: MAX_TEXT_INFLATE });
	} catch {
		// Unreadable or oversized text is not image data; sharp decides on the file as a whole.
		return data.subarray(start);
	}
}

const WEBP_PIXEL_CHUNKS = new Set(['VP8 ', 'VP8L', 'ALPH', 'ANMF']);

function walkWebp(b: Buffer): Walk {
	if (
		b.length < 12 ||
		b.toString('latin1', 0, 4) !== 'RIFF' ||
		b.toString('latin1', 8, 12) !== 'WEBP'
	) {
		return { detail: 'no WebP header' };
	}
	const end = 8 + b.readUInt32LE(4);
	if (end > b.length) return { detail: 'the file is shorter than its WebP header says' };
	const regions: Region[] = [];
	let i = 12;
	while (i < end) {
		if (i + 8 > end) return { detail: `the WebP chunk at offset ${i} is cut short` };
		const type = b.toString('latin1', i, i + 4);
		const length = b.readUInt32LE(i + 4);
		const dataEnd = i + 8 + length;
		if (dataEnd > end) return { detail: `the WebP ${type.trim()} chunk runs past the end` };
		if (!WEBP_PIXEL_CHUNKS.has(type)) regions.push([i + 8, dataEnd]);
		i = dataEnd + (length % 2);
	}
	return { end, regions };
}
