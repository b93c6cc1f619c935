// Photo sizes and URLs, importable from components as well as the server ($lib/server/media
// re-exports all of it and adds storing).

/** Web sizes; an image is never upscaled, see `mediaWidthsFor`. */
export const MEDIA_WIDTHS = [480, 960, 1600] as const;
export type MediaWidth = number;
export type MediaFormat = 'webp' | 'jpeg';

export const MAX_UPLOAD_BYTES = 15 * 1024 * 1024;
export const MAX_ALT_LENGTH = 300;
/** The width `mediaUrl` asks for when none is given. */
export const DEFAULT_MEDIA_WIDTH = 960;

/** What the upload endpoint answers (and `ImageUpload` hands to `onuploaded`). */
export interface UploadedImage {
	id: string;
	width: number;
	height: number;
	alt: string;
	url: string;
	srcset: string;
	markdown: string;
}

/**
 * The widths stored for an image whose (upright) original is `originalWidth` pixels wide: every
 * web size that fits, or the original width alone when it is narrower than the smallest size.
 * `media.width` holds the original width, so callers can build a srcset without a query.
 */
export function mediaWidthsFor(originalWidth: number): MediaWidth[] {
	const fitting = MEDIA_WIDTHS.filter((w) => w <= originalWidth);
	return fitting.length > 0 ? fitting : [originalWidth];
}

/** The largest stored width not above `wanted` (else the smallest stored one). */
export function nearestWidth(stored: readonly number[], wanted: number): number {
	const sorted = [...stored].sort((a, b) => a - b);
	const fitting = sorted.filter((w) => w <= wanted);
	return fitting.length > 0 ? fitting[fitting.length - 1] : sorted[0];
}

/**
 * '/media/<id>/<width>.<format>'. The route serves the nearest stored width at or below the one
 * asked for (else the smallest), so the default 960 is safe for small images too; pass
 * `nearestWidth(mediaWidthsFor(media.width), 960)` for a URL that names the exact file.
 */
export function mediaUrl(
	id: string,
	width: number = DEFAULT_MEDIA_WIDTH,
	format: MediaFormat = 'webp'
): string {
	return `/media/${encodeURIComponent(id)}/${Math.round(width)}.${format}`;
}

export function mediaSrcset(id: string, widths: number[], format: MediaFormat = 'webp'): string {
	return [...new Set(widths)]
		.sort((a, b) => a - b)
		.map((w) => `${mediaUrl(id, w, format)} ${w}w`)
		.join(', ');
}

/** `![alt](url)` with the alt text escaped so that it cannot close the image syntax early. */
export function imageMarkdown(alt: string, url: string): string {
	const safeAlt = alt
		.replace(/\s+/g, ' ')
		.trim()
		.replace(/[\\[\]]/g, (c) => `\\${c}`);
	return `![${safeAlt}](${url})`;
}
