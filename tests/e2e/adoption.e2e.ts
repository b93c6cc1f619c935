import { describe, expect, it } from 'vitest';
import { demoUser, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

describe('adopting a patient', () => {
	it('patient page → level → test checkout with 4242… → thank-you → the account lists it', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('supporter').email);
		await openForm(page, '/patients/coralina');
		await Promise.all([
			page.waitForURL('**/patients/coralina/adopt'),
			page.getByRole('link', { name: 'Adopt Coralina' }).click()
		]);
		await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
		await page.getByRole('radio', { name: /Ripple/ }).check();
		await Promise.all([
			page.waitForURL(/\/fake-stripe\/checkout\//),
			page.getByRole('button', { name: 'Continue to payment' }).click()
		]);
		await page.getByLabel('Card number').fill('4242 4242 4242 4242');
		await page.getByLabel('Expiry (MM / YY)').fill('12 / 34');
		await page.getByLabel('CVC').fill('123');
		await Promise.all([
			page.waitForURL(/\/adopt\/thanks\?session_id=cs_/),
			page.getByRole('button', { name: /^Pay/ }).click()
		]);
		// The webhook may arrive a moment after the browser: the page polls until it has.
		await page
			.getByRole('status')
			.filter({ hasText: 'adoption of Coralina is confirmed' })
			.waitFor({ timeout: 30_000 });

		await page.goto('/account');
		const adoptions = page.getByRole('region', { name: 'Your adoptions' });
		await expect(adoptions.getByText('Coralina').first().textContent()).resolves.toBe('Coralina');
		const [download] = await Promise.all([
			page.waitForEvent('download'),
			adoptions
				.getByRole('link', { name: /Download the certificate/ })
				.first()
				.click()
		]);
		expect(download.suggestedFilename()).toBe('coralina-adoption-certificate.pdf');
		const pdf = await (await download.createReadStream()).toArray();
		expect(Buffer.concat(pdf).subarray(0, 5).toString()).toBe('%PDF-');

		// The gift's receipt: Ripple buys nothing, so the whole $25.00 is deductible.
		const receipts = page.getByRole('table', { name: /Your receipts/ });
		const row = receipts
			.getByRole('row')
			.filter({ hasText: 'Ripple adoption of Coralina' })
			.first();
		await expect(row.textContent()).resolves.toMatch(/\$25\.00.*\$25\.00/);
		const [receipt] = await Promise.all([
			page.waitForEvent('download'),
			row.getByRole('link', { name: /Receipt \d+/ }).click()
		]);
		expect(receipt.suggestedFilename()).toMatch(/^receipt-\d+\.pdf$/);
		const receiptPdf = await (await receipt.createReadStream()).toArray();
		expect(Buffer.concat(receiptPdf).subarray(0, 5).toString()).toBe('%PDF-');
		await context.close();
	});

	it('a declined card shows the processor’s message and creates no adoption', async () => {
		const { context, page } = await newPage(browser());
		await openForm(page, '/patients/coralina/adopt');
		await page.getByRole('radio', { name: /Ripple/ }).check();
		await page.getByLabel('Your name').fill('Declined Visitor');
		await page.getByLabel('Your e-mail').fill('declined.visitor@example.test');
		await Promise.all([
			page.waitForURL(/\/fake-stripe\/checkout\//),
			page.getByRole('button', { name: 'Continue to payment' }).click()
		]);
		await page.getByLabel('Card number').fill('4000 0000 0000 0002');
		await page.getByLabel('Expiry (MM / YY)').fill('12 / 34');
		await page.getByLabel('CVC').fill('123');
		await page.getByRole('button', { name: /^Pay/ }).click();
		await expect(page.getByRole('alert').textContent()).resolves.toContain(
			'Your card was declined.'
		);
		expect(page.url()).toMatch(/\/fake-stripe\/checkout\//);
		await context.close();
	});

	it('a monthly adoption can be cancelled on the processor’s billing page', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('supporter').email);
		await openForm(page, '/patients/coralina/adopt');
		await page.getByRole('radio', { name: /Swell/ }).check();
		await Promise.all([
			page.waitForURL(/\/fake-stripe\/checkout\//),
			page.getByRole('button', { name: 'Continue to payment' }).click()
		]);
		await page.getByLabel('Card number').fill('4242424242424242');
		await page.getByLabel('Expiry (MM / YY)').fill('12 / 34');
		await page.getByLabel('CVC').fill('123');
		await Promise.all([
			page.waitForURL(/\/adopt\/thanks/),
			page.getByRole('button', { name: /^Pay/ }).click()
		]);
		await page.getByRole('status').filter({ hasText: 'is confirmed' }).waitFor({ timeout: 30_000 });

		// An administrator moves the test service's clock a month: the monthly gift renews.
		const admin = await newPage(browser());
		await signIn(admin.page, demoUser('admin').email);
		await openForm(admin.page, '/staff/sandbox');
		await admin.page.getByRole('button', { name: 'Move the clock a month' }).click();
		await admin.page.getByRole('status').first().waitFor();
		await admin.context.close();
		const swell = page
			.getByRole('region', { name: 'Your adoptions' })
			.getByRole('listitem')
			.filter({ hasText: 'Swell' })
			.first();
		// (The payments list sits in a closed <details>: counted, not looked at.)
		const payments = swell.locator('details li');
		await page.goto('/account');
		for (let i = 0; i < 30 && (await payments.count()) < 2; i++) {
			await page.waitForTimeout(500);
			await page.reload();
		}
		expect(await payments.count()).toBe(2);

		await openForm(page, '/account');
		await Promise.all([
			page.waitForURL(/\/fake-stripe\/billing\//),
			page
				.getByRole('button', { name: 'Change the card or cancel the monthly gift' })
				.first()
				.click()
		]);
		await page.getByRole('button', { name: 'Cancel this monthly gift' }).first().click();
		await page.getByRole('button', { name: 'Keep this monthly gift' }).first().waitFor();
		await Promise.all([
			page.waitForURL('**/account'),
			page.getByRole('link', { name: 'Back to the site' }).click()
		]);
		// The gift runs to the end of the paid month, and the account says when it ends.
		// (The processor's event may come a moment after the browser: look again until it has.)
		const endsOn = page.getByRole('region', { name: 'Your adoptions' }).getByText(/ends on \d{4}-/);
		for (let i = 0; i < 30 && (await endsOn.count()) === 0; i++) {
			await page.waitForTimeout(500);
			await page.reload();
		}
		expect(await endsOn.count()).toBeGreaterThan(0);
		await context.close();
	});
});
