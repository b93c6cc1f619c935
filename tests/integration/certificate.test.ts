// The adoption certificate download: only the adoptions the account page lists, as a PDF.
import { isHttpError, isRedirect } from '@sveltejs/kit';
import { PDFDict, PDFDocument, PDFName, PDFNumber, PDFRawStream, type PDFRef } from 'pdf-lib';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { certificateFor } from '$lib/server/adoptions/certificate-data';
import type { SessionUser } from '$lib/server/auth/lucia';
import {
	adoptionLevels,
	adoptions,
	gifts,
	media,
	mediaVariants,
	organisationSettings,
	patients,
	users
} from '$lib/server/db/schema';
import { GET } from '../../src/routes/account/adoptions/[id]/certificate.pdf/+server';
import { useTestDatabase } from '../setup/test-db';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();

const PATIENT = crypto.randomUUID();
const PLAIN_PATIENT = crypto.randomUUID();
const LEVEL = crypto.randomUUID();
const PHOTO = crypto.randomUUID().replaceAll('-', '');

function event(id: string, user: SessionUser | null) {
	const url = new URL(`http://localhost/account/adoptions/${id}/certificate.pdf`);
	return {
		request: new Request(url),
		url,
		locals: { user, session: null, requestId: 'test' },
		params: { id },
		cookies: { get: () => undefined, set: () => {}, delete: () => {} },
		getClientAddress: () => '127.0.0.1'
	} as never;
}

/** What the handler threw (errors and redirects are thrown), or its response. */
async function thrownBy(e: Parameters<typeof GET>[0]): Promise<unknown> {
	try {
		return await GET(e);
	} catch (thrown) {
		return thrown;
	}
}

async function person(verified = false): Promise<SessionUser> {
	const id = crypto.randomUUID();
	const email = `${id.slice(0, 8)}@example.test`;
	const name = `Person ${id.slice(0, 4)}`;
	await db().insert(users).values({ id, email, name, emailVerified: verified });
	return { id, email, name, roles: ['supporter'] };
}

async function adoption(values: Partial<typeof adoptions.$inferInsert> = {}): Promise<string> {
	const id = crypto.randomUUID();
	await db()
		.insert(adoptions)
		.values({
			id,
			patientId: PATIENT,
			levelId: LEVEL,
			kind: 'self',
			status: 'active',
			interval: 'once',
			amountCents: 2500,
			currency: 'usd',
			supporterEmail: 'someone@example.test',
			supporterName: 'Ana Example',
			startedAt: new Date('2026-03-04T15:00:00Z'),
			...values
		});
	return id;
}

async function jpeg(width: number, height: number) {
	return sharp({ create: { width, height, channels: 3, background: '#3f8ea6' } })
		.jpeg()
		.toBuffer();
}

function images(doc: PDFDocument): PDFDict[] {
	const xobjects = doc.getPage(0).node.Resources()?.lookupMaybe(PDFName.of('XObject'), PDFDict);
	return [...new Set(xobjects ? [...xobjects.values()] : [])]
		.map((ref) => doc.context.lookup(ref as PDFRef))
		.filter((x): x is PDFRawStream => x instanceof PDFRawStream)
		.map((x) => x.dict)
		.filter((d) => d.get(PDFName.of('Subtype')) === PDFName.of('Image'));
}

beforeAll(async () => {
	await db()
		.insert(organisationSettings)
		.values({ id: 1, displayName: 'Example Turtle Hospital', legalName: 'Example Inc.' })
		.onConflictDoUpdate({
			target: organisationSettings.id,
			set: { displayName: 'Example Turtle Hospital' }
		});
	await db().insert(media).values({ id: PHOTO, width: 1600, height: 1000 });
	await db()
		.insert(mediaVariants)
		.values([
			{
				mediaId: PHOTO,
				width: 480,
				height: 300,
				format: 'jpeg',
				bytes: await jpeg(480, 300),
				etag: '"a"'
			},
			{
				mediaId: PHOTO,
				width: 960,
				height: 600,
				format: 'jpeg',
				bytes: await jpeg(960, 600),
				etag: '"b"'
			},
			{
				mediaId: PHOTO,
				width: 1600,
				height: 1000,
				format: 'jpeg',
				bytes: await jpeg(1600, 1000),
				etag: '"c"'
			},
			{
				mediaId: PHOTO,
				width: 960,
				height: 600,
				format: 'webp',
				bytes: Buffer.from('RIFF'),
				etag: '"d"'
			}
		]);
	await db()
		.insert(patients)
		.values([
			{
				id: PATIENT,
				slug: 'cert-test',
				name: 'Marea',
				species: 'green',
				lifeStage: 'juvenile',
				admittedOn: '2026-01-01',
				admissionReason: 'entanglement',
				status: 'in_rehabilitation',
				heroImage: `/media/${PHOTO}/960.webp`,
				medicalNotes: 'STAFF-ONLY-NOTE'
			},
			{
				id: PLAIN_PATIENT,
				slug: 'cert-plain',
				name: 'Brisa',
				species: 'kemps_ridley',
				lifeStage: 'subadult',
				admittedOn: '2026-01-02',
				admissionReason: 'cold_stunning',
				status: 'died',
				heroImage: '/demo/memorial.svg'
			}
		]);
	await db().insert(adoptionLevels).values({
		id: LEVEL,
		slug: 'cert-ripple',
		name: 'Ripple',
		amountCents: 2500,
		interval: 'once'
	});
});

describe('the certificate download', () => {
	it('gives the owner a PDF attachment that is not cached', async () => {
		const owner = await person();
		const id = await adoption({ supporterId: owner.id });
		const response = await GET(event(id, owner));
		expect(response.status).toBe(200);
		expect(response.headers.get('content-type')).toBe('application/pdf');
		expect(response.headers.get('content-disposition')).toBe(
			'attachment; filename="cert-test-adoption-certificate.pdf"'
		);
		expect(response.headers.get('cache-control')).toBe('private, no-store');
		const bytes = new Uint8Array(await response.arrayBuffer());
		expect(Buffer.from(bytes.subarray(0, 5)).toString('latin1')).toBe('%PDF-');
		expect(Number(response.headers.get('content-length'))).toBe(bytes.length);
		const doc = await PDFDocument.load(bytes);
		expect(doc.getTitle()).toBe('Certificate of symbolic adoption: Marea');
		expect(doc.getAuthor()).toBe('Example Turtle Hospital');
		// The hero photo's 960 px JPEG variant, not the WebP the hero URL names nor another width.
		const [image, ...more] = images(doc);
		expect(more).toEqual([]);
		expect(image.lookup(PDFName.of('Width'), PDFNumber).asNumber()).toBe(960);
	});

	it('answers 404 to another signed-in account, exactly as for an unknown adoption', async () => {
		const owner = await person();
		const stranger = await person();
		const id = await adoption({ supporterId: owner.id });
		for (const attempt of [event(id, stranger), event(crypto.randomUUID(), owner)]) {
			const thrown = await thrownBy(attempt);
			expect(isHttpError(thrown) && thrown.status).toBe(404);
		}
	});

	it('sends a visitor to sign in', async () => {
		const owner = await person();
		const id = await adoption({ supporterId: owner.id });
		const thrown = await thrownBy(event(id, null));
		expect(isRedirect(thrown) && thrown.status).toBe(303);
		if (isRedirect(thrown)) expect(thrown.location).toMatch(/^\/signin\?redirectTo=/);
	});
});

describe('which adoptions have a certificate', () => {
	it('only those the account page lists: not pending or failed ones', async () => {
		const owner = await person();
		for (const status of ['pending', 'failed'] as const) {
			const id = await adoption({ supporterId: owner.id, status });
			expect(await certificateFor(id, owner.id)).toBeNull();
		}
		const ended = await adoption({ supporterId: owner.id, status: 'ended' });
		expect(await certificateFor(ended, owner.id)).not.toBeNull();
	});

	it('a cancelled adoption only when a payment was made and kept', async () => {
		const owner = await person();
		const unpaid = await adoption({
			supporterId: owner.id,
			status: 'cancelled',
			interval: 'month'
		});
		expect(await certificateFor(unpaid, owner.id)).toBeNull();
		const paid = await adoption({ supporterId: owner.id, status: 'cancelled', interval: 'month' });
		await db().insert(gifts).values({
			id: crypto.randomUUID(),
			adoptionId: paid,
			status: 'paid',
			amountCents: 2500,
			currency: 'usd',
			paidAt: new Date()
		});
		expect(await certificateFor(paid, owner.id)).not.toBeNull();
	});

	it('a gift to a verified address, in the recipient’s name; an unverified one gets nothing', async () => {
		const recipient = await person(true);
		const id = await adoption({
			kind: 'gift',
			recipientName: 'Rosa Example',
			recipientEmail: recipient.email
		});
		const certificate = await certificateFor(id, recipient.id);
		expect(certificate?.adoptedBy).toBe('Rosa Example');

		const unverified = await person(false);
		const other = await adoption({
			kind: 'gift',
			recipientName: 'X',
			recipientEmail: unverified.email
		});
		expect(await certificateFor(other, unverified.id)).toBeNull();
	});

	it('reads public patient fields only, and no photo when there is no stored JPEG', async () => {
		const owner = await person();
		const id = await adoption({
			supporterId: owner.id,
			patientId: PLAIN_PATIENT,
			kind: 'classroom',
			teacherName: 'Ms Example',
			schoolName: 'Harbour School',
			classSize: 24
		});
		const certificate = await certificateFor(id, owner.id);
		expect(certificate).toEqual({
			patientSlug: 'cert-plain',
			patientName: 'Brisa',
			speciesCommon: "Kemp's ridley",
			speciesScientific: 'Lepidochelys kempii',
			adoptedBy: 'Ms Example’s class at Harbour School',
			levelName: 'Ripple',
			startedOn: '2026-03-04',
			organisation: 'Example Turtle Hospital',
			photoJpeg: null,
			remembered: true
		});
		const withPhoto = await certificateFor(await adoption({ supporterId: owner.id }), owner.id);
		expect(JSON.stringify({ ...withPhoto, photoJpeg: null })).not.toContain('STAFF-ONLY-NOTE');
	});
});
