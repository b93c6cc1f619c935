import { describe, expect, it } from 'vitest';
import { demoUser, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

describe('the Ledger in the browser', () => {
	it('filters the gifts from the JSON API without reloading the page, and keeps the URL', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('development').email);
		await openForm(page, '/staff/ledger/gifts');
		// A mark on this document: a reload would wipe it.
		await page.evaluate(() => ((window as unknown as { mark: number }).mark = 1));
		const apiCalls: string[] = [];
		page.on('request', (r) => {
			if (r.url().includes('/api/ledger/gifts')) apiCalls.push(r.url());
		});

		await page.getByLabel('Kind').selectOption('manual');
		// The demo has no gift recorded by hand: the answer for this filter is an empty list.
		await page
			.getByRole('status')
			.filter({ hasText: /^0 gifts match these filters$/ })
			.waitFor();
		expect(new URL(page.url()).searchParams.get('interval')).toBe('manual');
		expect(apiCalls.some((u) => u.includes('interval=manual'))).toBe(true);
		expect(await page.evaluate(() => (window as unknown as { mark?: number }).mark)).toBe(1);

		await page.getByLabel('Kind').selectOption('');
		await page
			.getByRole('status')
			.filter({ hasText: /^[1-9][\d,]* gifts?$/ })
			.waitFor();
		expect(new URL(page.url()).searchParams.has('interval')).toBe(false);
		expect(await page.evaluate(() => (window as unknown as { mark?: number }).mark)).toBe(1);
		await context.close();
	});

	it('draws the dashboard charts, each with its table', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('development').email);
		await page.goto('/staff/ledger/dashboard');
		const charts = page.locator('figure canvas[role="img"]');
		await charts.first().waitFor();
		expect(await charts.count()).toBe(2);
		// Chart.js sizes the canvas once it has drawn.
		await page.waitForFunction(() =>
			[...document.querySelectorAll('figure canvas')].every(
				(c) => (c as HTMLCanvasElement).width > 0
			)
		);
		expect(await page.locator('figure table').count()).toBe(2);
		await context.close();
	});
});
