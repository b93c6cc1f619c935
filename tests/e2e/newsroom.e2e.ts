import sharp from 'sharp';
import { describe, expect, it } from 'vitest';
import { DEMO_USERS } from '$lib/server/db/seed/demo';
import { demoUser, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

/** A JPEG carrying GPS coordinates in its EXIF, as a phone camera writes them. */
async function photoWithGps(): Promise<Buffer> {
	const photo = await sharp({
		create: { width: 1200, height: 800, channels: 3, background: '#3f8ea6' }
	})
		.jpeg()
		.withExif({
			IFD0: { Make: 'ExampleCam', Model: 'Field 1' },
			IFD3: {
				GPSLatitudeRef: 'N',
				GPSLatitude: '17/1 58/1 3000/100',
				GPSLongitudeRef: 'W',
				GPSLongitude: '66/1 37/1 1200/100'
			}
		})
		.toBuffer();
	// The upload really carries a location before Tideward cleans it: IFD0 holds the GPSInfo
	// pointer, tag 0x8825 (EXIF 2.32, section 4.6.3), in either byte order.
	const exif = (await sharp(photo).metadata()).exif;
	expect(exif).toBeDefined();
	const gpsPointer = [Buffer.from([0x88, 0x25]), Buffer.from([0x25, 0x88])];
	expect(gpsPointer.some((tag) => exif!.includes(tag))).toBe(true);
	return photo;
}

describe('the Newsroom flow', () => {
	it('write, add a photo, submit, approve, schedule, and see it published without GPS', async () => {
		const author = demoUser('educator');
		const approver = DEMO_USERS.find(
			(u) => u.roles.includes('educator') && u.email !== author.email
		)!;
		const title = `A calm week in the big pool ${Date.now()}`;

		const writer = await newPage(browser());
		await signIn(writer.page, author.email);
		await openForm(writer.page, '/staff/newsroom/stories/new');
		await writer.page.getByLabel('Title').fill(title);
		await writer.page.getByLabel('Kind').selectOption('progress');
		await writer.page
			.getByRole('group', { name: 'Patients in this story' })
			.getByRole('checkbox')
			.first()
			.check();
		await writer.page
			.getByLabel('Story (Markdown)')
			.fill('She **dove** twice today.\n\n<script>alert(1)</script>');
		await writer.page.getByTestId('story-preview').locator('strong', { hasText: 'dove' }).waitFor();
		expect(await writer.page.getByTestId('story-preview').innerHTML()).not.toContain('<script');
		await Promise.all([
			writer.page.waitForURL(/\/staff\/newsroom\/stories\/[0-9a-f-]+/),
			writer.page.getByRole('button', { name: 'Save draft' }).click()
		]);
		await writer.page.waitForLoadState('networkidle');

		await writer.page.getByLabel('Photo').setInputFiles({
			name: 'pool.jpg',
			mimeType: 'image/jpeg',
			buffer: await photoWithGps()
		});
		await writer.page.getByLabel('Alt text').fill('A green turtle gliding over the pool floor');
		await writer.page.getByRole('button', { name: 'Upload photo' }).click();
		await expect
			.poll(() => writer.page.getByLabel('Story (Markdown)').inputValue(), { timeout: 20_000 })
			.toMatch(/!\[A green turtle gliding over the pool floor\]\(\/media\//);
		await writer.page.getByRole('button', { name: 'Save', exact: true }).click();
		await writer.page.getByRole('status').filter({ hasText: 'Saved.' }).waitFor();
		await writer.page.getByRole('button', { name: 'Submit for review' }).click();
		await expect
			.poll(() => writer.page.getByTestId('story-status').textContent())
			.toContain('in review');
		const editorUrl = writer.page.url();

		const reviewer = await newPage(browser());
		await signIn(reviewer.page, approver.email);
		await openForm(reviewer.page, new URL(editorUrl).pathname);
		const soon = new Date(Date.now() + 60_000);
		const local = new Date(soon.getTime() - soon.getTimezoneOffset() * 60_000)
			.toISOString()
			.slice(0, 16);
		await reviewer.page.getByLabel('Publish at (your local time)').fill(local);
		await reviewer.page.getByRole('button', { name: 'Approve and schedule' }).click();
		await expect
			.poll(() => reviewer.page.getByTestId('story-status').textContent())
			.toContain('scheduled');

		// Nobody is present when it goes out: the server publishes it at the set time.
		await expect
			.poll(
				async () => {
					await reviewer.page.reload();
					return reviewer.page.getByTestId('story-status').textContent();
				},
				{ timeout: 100_000, interval: 2000 }
			)
			.toContain('published');
		const publicLink = await reviewer.page
			.getByRole('link', { name: 'public page' })
			.getAttribute('href');

		const visitor = await newPage(browser());
		const response = await visitor.page.goto(publicLink!);
		expect(response?.status()).toBe(200);
		await expect(visitor.page.getByRole('heading', { level: 1 }).textContent()).resolves.toBe(
			title
		);
		const html = await visitor.page.content();
		expect(html).not.toContain('<script>alert(1)');
		const src = await visitor.page
			.locator('img[alt="A green turtle gliding over the pool floor"]')
			.first()
			.getAttribute('src');
		expect(src).toMatch(/^\/media\//);
		const served = await visitor.page.request.get(src!);
		expect(served.ok()).toBe(true);
		const meta = await sharp(Buffer.from(await served.body())).metadata();
		expect(meta.exif).toBeUndefined();
		expect(meta.xmp).toBeUndefined();

		for (const p of [writer, reviewer, visitor]) await p.context.close();
	}, 180_000);
});
