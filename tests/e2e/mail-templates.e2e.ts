import { mkdirSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { DEMO_ORGANISATION } from '$lib/server/db/seed/demo';
import { demoTemplateVars } from '$lib/server/mail/demo-vars';
import { renderEmail, TEMPLATE_NAMES } from '$lib/server/mail/templates';
import { baseURL, useBrowser } from './browser';

// Every e-mail template, filled with the demo values, as Chromium draws it on a phone and on a
// desktop screen. The pictures go to test-artifacts/mail/ for a person to look at; the test
// fails when the phone width scrolls sideways or an image does not load. The images come from
// the running demo server, as they would for a reader.

const browser = useBrowser();
const OUT = resolve('test-artifacts/mail');
const PHONE = 375;
const WIDTHS = [PHONE, 1024];

beforeAll(() => {
	mkdirSync(OUT, { recursive: true });
});

describe('e-mail templates in Chromium', () => {
	it.each(TEMPLATE_NAMES)('%s fits a phone and a desktop screen', async (name) => {
		const mail = await renderEmail(
			name,
			demoTemplateVars(name, {
				orgName: DEMO_ORGANISATION.displayName,
				orgAddress: DEMO_ORGANISATION.postalAddress,
				siteUrl: baseURL()
			})
		);
		for (const width of WIDTHS) {
			const context = await browser().newContext({ viewport: { width, height: 800 } });
			try {
				const page = await context.newPage();
				await page.setContent(mail.html, { waitUntil: 'load' });

				const broken = await page.evaluate(() =>
					Array.from(document.images)
						.filter((image) => !image.complete || image.naturalWidth === 0)
						.map((image) => image.src)
				);
				expect(broken, `images that did not load at ${width} px`).toEqual([]);

				if (width === PHONE) {
					const scrollWidth = await page.evaluate(() => document.documentElement.scrollWidth);
					expect(scrollWidth, 'page width at 375 px').toBeLessThanOrEqual(PHONE + 1);
				}
				await page.screenshot({ path: join(OUT, `${name}-${width}.png`), fullPage: true });
			} finally {
				await context.close();
			}
		}
	});
});
