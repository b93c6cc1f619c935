import { json } from '@sveltejs/kit';
import { z } from 'zod';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import {
	DEFAULT_MEDIA_WIDTH,
	ImageRefused,
	MAX_ALT_LENGTH,
	MAX_UPLOAD_BYTES,
	imageMarkdown,
	mediaSrcset,
	mediaUrl,
	mediaWidthsFor,
	nearestWidth,
	storeImage,
	type UploadedImage
} from '$lib/server/media';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

/** Room for the multipart envelope and the alt text around the photo itself. */
const MAX_BODY_BYTES = MAX_UPLOAD_BYTES + 64 * 1024;
const TOO_LARGE = `Photos can be at most ${MAX_UPLOAD_BYTES / (1024 * 1024)} MB.`;

const uploadForm = z.object({
	file: z.instanceof(File, { error: 'Choose a photo to upload.' }),
	alt: z
		.string({ error: 'Describe the photo in a few words (alt text) for people who cannot see it.' })
		.trim()
		.min(1, 'Describe the photo in a few words (alt text) for people who cannot see it.')
		.max(MAX_ALT_LENGTH, `Keep the alt text under ${MAX_ALT_LENGTH} characters.`)
});

function refuse(status: number, error: string, field?: 'file' | 'alt') {
	return json({ error, ...(field ? { field } : {}) }, { status });
}

export const POST: RequestHandler = async (event) => {
	const user = requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	const declared = Number(event.request.headers.get('content-length') ?? NaN);
	if (declared > MAX_BODY_BYTES) return refuse(413, TOO_LARGE, 'file');

	let form: FormData;
	try {
		form = await event.request.formData();
	} catch (error) {
		// The server stops reading a body past its BODY_SIZE_LIMIT (a chunked upload has no
		// Content-Length to refuse up front): that is a file too large, not a malformed form.
		if ((error as { status?: unknown } | null)?.status === 413)
			return refuse(413, TOO_LARGE, 'file');
		return refuse(400, 'Send the photo as a multipart form with a file and its alt text.');
	}
	const parsed = parseForm(uploadForm, form);
	if (!parsed.ok) {
		const field = parsed.errors.file ? 'file' : 'alt';
		return refuse(400, parsed.errors[field] ?? Object.values(parsed.errors)[0], field);
	}
	const { file, alt } = parsed.data;
	if (file.size > MAX_UPLOAD_BYTES) return refuse(413, TOO_LARGE, 'file');

	try {
		const stored = await storeImage({
			bytes: Buffer.from(await file.arrayBuffer()),
			originalName: file.name,
			alt,
			uploadedBy: user.id
		});
		const widths = mediaWidthsFor(stored.width);
		const url = mediaUrl(stored.id, nearestWidth(widths, DEFAULT_MEDIA_WIDTH));
		const reply: UploadedImage = {
			...stored,
			alt,
			url,
			srcset: mediaSrcset(stored.id, widths),
			markdown: imageMarkdown(alt, url)
		};
		return json(reply, { status: 201 });
	} catch (error) {
		if (error instanceof ImageRefused) return refuse(400, error.message, 'file');
		throw error;
	}
};
