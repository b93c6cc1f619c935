import { describe, expect, it } from 'vitest';
import { demoUser, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

/** A few days of GPS fixes in open water south of the demo coast, one of them malformed. */
function csvWithOneBadRow(): string {
	const base = Date.now() - 60 * 86_400_000;
	const rows = ['date time;lat;lon;quality'];
	for (let i = 0; i < 6; i++) {
		const time = new Date(base + i * 86_400_000).toISOString().replace('T', ' ').slice(0, 19);
		rows.push(`${time};${(16.2 - i * 0.05).toFixed(4)};${(-68.1 - i * 0.05).toFixed(4)};G`);
	}
	rows.splice(3, 0, '2026-13-40 25:00:00;16.1;-68.2;G');
	return rows.join('\n') + '\n';
}

describe('the Tracking desk and the public journey', () => {
	it('a tracker previews a CSV, maps its columns, sees bad rows refused, then imports the good ones', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('tracker').email);
		await openForm(page, '/staff/tracking/perla');
		await page.getByRole('region', { name: /track/i }).locator('canvas').first().waitFor();

		const upload = {
			name: 'extra-fixes.csv',
			mimeType: 'text/csv',
			buffer: Buffer.from(csvWithOneBadRow())
		};
		await page.getByLabel('File', { exact: true }).setInputFiles(upload);
		// The preview suggests the mapping from the header row.
		await page.getByRole('table', { name: 'First rows of the file' }).waitFor();
		await expect(page.getByLabel('Timestamp (UTC)').inputValue()).resolves.toBe('date time');
		await expect(page.getByLabel('Latitude').inputValue()).resolves.toBe('lat');
		await expect(page.getByLabel('Location class (optional)').inputValue()).resolves.toBe(
			'quality'
		);

		await page.getByRole('button', { name: 'Import positions' }).click();
		await page.getByRole('heading', { name: 'File refused: nothing was stored' }).waitFor();
		const problems = page.getByRole('table', { name: 'Rows with problems' });
		await expect(problems.getByRole('row').nth(1).textContent()).resolves.toContain('4');

		await page.getByLabel('Import the good rows and list the bad ones').check();
		await page.getByRole('button', { name: 'Import positions' }).click();
		await page.getByRole('heading', { name: 'Imported', exact: true }).waitFor();
		const summary = await page.getByRole('status').filter({ hasText: 'rows read' }).textContent();
		expect(summary?.replace(/\s+/g, ' ')).toMatch(
			/7 rows read · 6 added · 0 already stored · 1 with problems/
		);
		await page
			.getByRole('table', { name: 'Recent imports' })
			.getByText('extra-fixes.csv')
			.waitFor();
		await context.close();
	});

	it('a visitor sees the coarse journey map, drawn without anything from the internet', async () => {
		const { context, page } = await newPage(browser());
		const hosts = new Set<string>();
		page.on('request', (request) => hosts.add(new URL(request.url()).hostname));
		await page.goto('/patients/perla');
		const map = page.getByRole('region', { name: /journey/i });
		// MapLibre loads only once the map comes near the screen.
		await map.scrollIntoViewIfNeeded();
		await map.locator('canvas').first().waitFor();
		const slider = page.getByLabel('Replay the journey up to');
		await slider.focus();
		await page.keyboard.press('Home');
		await page.keyboard.press('End');
		expect([...hosts].every((h) => h === '127.0.0.1' || h === 'localhost')).toBe(true);

		const response = await page.request.get('/api/patients/perla/journey');
		expect(response.status()).toBe(200);
		expect((await response.json()).type).toBe('FeatureCollection');
		await context.close();
	});
});
