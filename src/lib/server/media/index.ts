import { fileTypeFromBuffer } from 'file-type';
import { createHash, randomUUID } from 'node:crypto';
import sharp, { type Metadata } from 'sharp';
import { MAX_ALT_LENGTH, MAX_UPLOAD_BYTES, mediaWidthsFor, type MediaFormat } from '$lib/media';
import { db, type Executor } from '../db';
import { cleanFileName } from '../file-names';
import { media, mediaVariants } from '../db/schema';
import { findStructureProblem, type ImageKind } from './inspect';

export {
	DEFAULT_MEDIA_WIDTH,
	MAX_ALT_LENGTH,
	MAX_UPLOAD_BYTES,
	MEDIA_WIDTHS,
	imageMarkdown,
	mediaSrcset,
	mediaUrl,
	mediaWidthsFor,
	nearestWidth,
	type MediaFormat,
	type MediaWidth,
	type UploadedImage
} from '$lib/media';

/** Larger images are refused before decoding (decompression bombs). */
export const MAX_INPUT_PIXELS = 50_000_000;

/** Why an upload was refused; the message is shown to staff as it is. */
export class ImageRefused extends Error {
	override name = 'ImageRefused';
}

const ACCEPTED: Record<string, ImageKind> = {
	'image/jpeg': 'jpeg',
	'image/png': 'png',
	'image/webp': 'webp'
};

const QUALITY = { webp: 80, jpeg: 82 } as const;

export interface StoredVariant {
	width: number;
	height: number;
	format: MediaFormat;
	bytes: Buffer;
	etag: string;
}

/**
 * Checks an uploaded photo, makes its web sizes without any metadata, and stores it with its
 * variants in one transaction. Refusals throw `ImageRefused` before anything is written.
 *
 * The checks follow OWASP's "Unrestricted File Upload" guidance and its File Upload Cheat Sheet:
 * allow-list the type from the content (never the name or the browser's content type), limit the
 * size and the decoded pixels, refuse files that are also something else (polyglots), and never
 * serve the uploaded bytes: every variant is re-encoded from decoded pixels.
 */
export async function storeImage(
	input: { bytes: Buffer; originalName?: string; alt: string; uploadedBy: string | null },
	executor: Executor = db()
): Promise<{ id: string; width: number; height: number }> {
	const alt = input.alt.replace(/\s+/g, ' ').trim();
	if (!alt) {
		throw new ImageRefused(
			'Describe the photo in a few words (alt text) for people who cannot see it.'
		);
	}
	if (alt.length > MAX_ALT_LENGTH) {
		throw new ImageRefused(`Keep the alt text under ${MAX_ALT_LENGTH} characters.`);
	}
	const { width, height, variants } = await prepareImage(input.bytes);
	const id = randomUUID();
	await executor.transaction(async (tx) => {
		await tx.insert(media).values({
			id,
			alt,
			width,
			height,
			originalName: cleanName(input.originalName),
			uploadedBy: input.uploadedBy
		});
		await tx.insert(mediaVariants).values(variants.map((v) => ({ mediaId: id, ...v })));
	});
	return { id, width, height };
}

/** Validates the bytes and renders every variant; exported for tests and previews. */
export async function prepareImage(
	bytes: Buffer
): Promise<{ width: number; height: number; variants: StoredVariant[] }> {
	if (bytes.length === 0) {
		throw new ImageRefused('This file is empty (0 bytes). Choose the photo again.');
	}
	if (bytes.length > MAX_UPLOAD_BYTES) {
		throw new ImageRefused(
			`This file is ${megabytes(bytes.length)}; photos can be at most ${megabytes(MAX_UPLOAD_BYTES)}.`
		);
	}
	const detected = await fileTypeFromBuffer(bytes);
	const kind = detected ? ACCEPTED[detected.mime] : undefined;
	if (!kind) {
		throw new ImageRefused(
			`Only JPEG, PNG or WebP photos can be uploaded; this file is ${describeRefusedType(bytes, detected)}.`
		);
	}

	const problem = findStructureProblem(bytes, kind);
	if (problem?.kind === 'markup') {
		throw new ImageRefused(
			`This file contains web page or script code (“${problem.signature}”) besides the photo, so it was refused. Open the photo in a photo editor, export it again and upload the new copy.`
		);
	}
	if (problem?.kind === 'trailing') {
		throw new ImageRefused(
			`This file has ${problem.extraBytes} bytes of extra data after the end of the photo (some phones attach a second picture or a short video this way). Export it as a plain ${kind.toUpperCase()} and upload that.`
		);
	}
	if (problem?.kind === 'malformed') throw damaged(problem.detail);

	const options = { limitInputPixels: MAX_INPUT_PIXELS, failOn: 'warning' } as const;
	let metadata: Metadata;
	try {
		metadata = await sharp(bytes, { ...options, limitInputPixels: false }).metadata();
	} catch (error) {
		throw damaged(error);
	}
	const pixels = (metadata.width ?? 0) * (metadata.height ?? 0);
	if (pixels > MAX_INPUT_PIXELS) {
		throw new ImageRefused(
			`This photo is ${metadata.width} × ${metadata.height} pixels (${Math.round(pixels / 1e6)} megapixels); the limit is ${MAX_INPUT_PIXELS / 1e6} megapixels. Make it smaller and upload it again.`
		);
	}
	if ((metadata.pages ?? 1) > 1) {
		throw new ImageRefused('Animated images cannot be uploaded; choose a still photo.');
	}

	const upright = metadata.autoOrient ?? { width: metadata.width, height: metadata.height };
	const widths = mediaWidthsFor(upright.width);
	// sharp writes no EXIF, ICC, XMP or IPTC unless asked (keepExif, withMetadata, …), and
	// `.rotate()` bakes the EXIF orientation into the pixels before it is dropped.
	const source = sharp(bytes, options).rotate();
	const variants: StoredVariant[] = [];
	try {
		for (const width of widths) {
			const sized = width < upright.width ? source.clone().resize({ width }) : source.clone();
			const [webp, jpeg] = await Promise.all([
				sized.clone().webp({ quality: QUALITY.webp }).toBuffer({ resolveWithObject: true }),
				sized
					.clone()
					.flatten({ background: '#ffffff' })
					.jpeg({ quality: QUALITY.jpeg, mozjpeg: true })
					.toBuffer({ resolveWithObject: true })
			]);
			for (const [format, out] of [
				['webp', webp],
				['jpeg', jpeg]
			] as const) {
				variants.push({
					width,
					height: out.info.height,
					format,
					bytes: out.data,
					etag: `"${createHash('sha256').update(out.data).digest('hex')}"`
				});
			}
		}
	} catch (error) {
		throw damaged(error);
	}
	return { width: upright.width, height: upright.height, variants };
}

function damaged(cause: unknown): ImageRefused {
	const detail = cause instanceof Error ? cause.message : String(cause);
	return new ImageRefused(
		`This photo could not be read: the file is damaged or incomplete (${detail.split('\n')[0]}). Export it again and upload the new copy.`,
		{ cause }
	);
}

function megabytes(bytes: number): string {
	return `${(bytes / (1024 * 1024)).toFixed(bytes % (1024 * 1024) === 0 ? 0 : 1)} MB`;
}

function describeRefusedType(
	bytes: Buffer,
	detected: { ext: string; mime: string } | undefined
): string {
	const head = bytes.subarray(0, 4096).toString('utf8').trimStart().toLowerCase();
	if (detected?.mime === 'image/gif') return 'a GIF';
	if (/<svg[\s>/]/.test(head)) return 'an SVG drawing';
	if (head.startsWith('<!doctype html') || /<html[\s>]/.test(head)) return 'a web page (HTML)';
	if (detected) return `a ${detected.ext.toUpperCase()} file (${detected.mime})`;
	if (head.startsWith('#!') || /<script|<\?php|function\s*\(|=>|\bimport\s/.test(head)) {
		return 'a script or program text';
	}
	const sample = bytes.subarray(0, 4096);
	const printable = sample.filter((c) => c === 9 || c === 10 || c === 13 || (c >= 32 && c < 127));
	if (printable.length === sample.length) return 'a text file';
	return 'of a type we do not recognise';
}

function cleanName(name: string | undefined): string | null {
	return (name && cleanFileName(name)) || null;
}
