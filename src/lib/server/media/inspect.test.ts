import { crc32 } from 'node:zlib';
import { deflateSync } from 'node:zlib';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { findStructureProblem } from './inspect';

// Polyglot checks after OWASP's "Unrestricted File Upload" guidance and File Upload Cheat Sheet.

const noise = { type: 'gaussian', mean: 128, sigma: 50 } as const;
const photo = () =>
	sharp({ create: { width: 320, height: 240, channels: 3, background: '#000', noise } });
const transparent = () =>
	sharp({
		create: {
			width: 64,
			height: 48,
			channels: 4,
			background: { r: 20, g: 120, b: 140, alpha: 0.5 }
		}
	});

function withJpegComment(jpeg: Buffer, text: string): Buffer {
	const body = Buffer.from(text, 'latin1');
	const header = Buffer.from([0xff, 0xfe, 0, 0]);
	header.writeUInt16BE(body.length + 2, 2);
	return Buffer.concat([jpeg.subarray(0, 2), header, body, jpeg.subarray(2)]);
}

function pngChunk(type: string, data: Buffer): Buffer {
	const head = Buffer.alloc(8);
	head.writeUInt32BE(data.length, 0);
	head.write(type, 4, 'latin1');
	const crc = Buffer.alloc(4);
	crc.writeUInt32BE(crc32(Buffer.concat([head.subarray(4), data])), 0);
	return Buffer.concat([head, data, crc]);
}

/** Inserts a chunk right after IHDR (8-byte signature + 25-byte IHDR chunk). */
function withPngChunk(png: Buffer, chunk: Buffer): Buffer {
	return Buffer.concat([png.subarray(0, 33), chunk, png.subarray(33)]);
}

describe('structure of genuine images', () => {
	it('accepts baseline and progressive JPEGs, PNGs and WebPs (lossy, lossless, alpha)', async () => {
		const files = {
			baseline: [await photo().jpeg({ quality: 92 }).toBuffer(), 'jpeg'],
			progressive: [await photo().jpeg({ progressive: true }).toBuffer(), 'jpeg'],
			mozjpeg: [await photo().jpeg({ mozjpeg: true }).toBuffer(), 'jpeg'],
			png: [await photo().png().toBuffer(), 'png'],
			pngAlpha: [await transparent().png().toBuffer(), 'png'],
			webpLossy: [await photo().webp().toBuffer(), 'webp'],
			webpLossless: [await photo().webp({ lossless: true }).toBuffer(), 'webp'],
			webpAlpha: [await transparent().webp().toBuffer(), 'webp']
		} as const;
		for (const [name, [bytes, kind]] of Object.entries(files)) {
			expect([name, findStructureProblem(bytes, kind)]).toEqual([name, null]);
		}
	});

	it('accepts harmless text metadata', async () => {
		const jpeg = await photo().jpeg().toBuffer();
		expect(findStructureProblem(withJpegComment(jpeg, 'Pool 3, morning feed <3'), 'jpeg')).toBe(
			null
		);
	});
});

describe('polyglots and trailing data', () => {
	it('finds markup in a JPEG comment segment, in any letter case', async () => {
		const jpeg = await photo().jpeg().toBuffer();
		for (const payload of [
			'<script>alert(1)</script>',
			'<SCRIPT SRC=//x.test/x.js>',
			'<?php system($_GET["c"]); ?>',
			'<svg onload=alert(1)>',
			'JaVaScRiPt:alert(1)'
		]) {
			const problem = findStructureProblem(withJpegComment(jpeg, payload), 'jpeg');
			expect(problem?.kind).toBe('markup');
		}
	});

	it('refuses bytes after the JPEG end marker, naming markup when the tail is a page', async () => {
		const jpeg = await photo().jpeg().toBuffer();
		expect(
			findStructureProblem(Buffer.concat([jpeg, Buffer.from('<html><script>x</script>')]), 'jpeg')
		).toEqual({ kind: 'markup', signature: '<html' });
		expect(findStructureProblem(Buffer.concat([jpeg, Buffer.from([1, 2, 3])]), 'jpeg')).toEqual({
			kind: 'trailing',
			extraBytes: 3
		});
	});

	it('refuses markup in PNG text chunks, also when zlib-compressed, and data after IEND', async () => {
		const png = await photo().png().toBuffer();
		const text = pngChunk('tEXt', Buffer.from('Comment\0<script>alert(1)</script>', 'latin1'));
		expect(findStructureProblem(withPngChunk(png, text), 'png')?.kind).toBe('markup');
		const hidden = pngChunk(
			'zTXt',
			Buffer.concat([Buffer.from('Comment\0\0'), deflateSync('<iframe src=//x.test>')])
		);
		expect(findStructureProblem(withPngChunk(png, hidden), 'png')?.kind).toBe('markup');
		expect(findStructureProblem(Buffer.concat([png, Buffer.from('tail')]), 'png')).toEqual({
			kind: 'trailing',
			extraBytes: 4
		});
	});

	it('refuses data after the end of a WebP RIFF container', async () => {
		const webp = await photo().webp().toBuffer();
		expect(findStructureProblem(Buffer.concat([webp, Buffer.from('<script>')]), 'webp')?.kind).toBe(
			'markup'
		);
	});

	it('reports truncated files as malformed', async () => {
		const jpeg = await photo().jpeg().toBuffer();
		const png = await photo().png().toBuffer();
		const webp = await photo().webp().toBuffer();
		for (const [bytes, kind] of [
			[jpeg, 'jpeg'],
			[png, 'png'],
			[webp, 'webp']
		] as const) {
			const cut = bytes.subarray(0, Math.floor(bytes.length * 0.7));
			expect(findStructureProblem(cut, kind)?.kind).toBe('malformed');
		}
	});
});
