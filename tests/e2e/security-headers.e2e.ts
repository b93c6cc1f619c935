import type { BrowserContext, Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { DEMO_PASSWORD } from '$lib/server/db/seed/demo';
import { baseURL, demoUser, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

const SESSION_COOKIE = 'tideward_session';

interface WatchedPage {
	context: BrowserContext;
	page: Page;
	/** Every sign that the policy got in the way, or that a script failed. */
	problems: string[];
}

/**
 * A fresh page that records Content Security Policy violations three ways (the document's
 * `securitypolicyviolation` event, Chromium's console report, requests refused by the policy)
 * and every uncaught script error. The listener is added through the DevTools protocol, which the
 * page's policy does not govern, and reports through a binding, so that it outlives navigations.
 */
async function watchedPage(): Promise<WatchedPage> {
	const { context, page } = await newPage(browser());
	const problems: string[] = [];
	await context.exposeBinding('__reportViolation', ({ page: from }, text: string) => {
		problems.push(`${from?.url() ?? '?'}: ${text}`);
	});
	await context.addInitScript(() => {
		document.addEventListener('securitypolicyviolation', (e) => {
			const report = (window as unknown as { __reportViolation: (text: string) => void })
				.__reportViolation;
			void report(
				`${e.effectiveDirective} refused ${e.blockedURI || 'inline'} at ${e.sourceFile}:${e.lineNumber}`
			);
		});
	});
	const fromConsole = (where: string, text: string) => {
		if (text.includes('Content Security Policy')) problems.push(`${where} console: ${text}`);
	};
	page.on('console', (message) => fromConsole(page.url(), message.text()));
	page.on('worker', (worker) => worker.on('console', (m) => fromConsole(worker.url(), m.text())));
	page.on('pageerror', (error) => problems.push(`${page.url()}: page error: ${error.message}`));
	page.on('requestfailed', (request) => {
		const reason = request.failure()?.errorText ?? '';
		if (/csp/i.test(reason)) problems.push(`${request.url()}: ${reason}`);
	});
	return { context, page, problems };
}

/**
 * Brings a map on screen (it may load only once it nears the viewport) and waits until it has
 * drawn: the map's own region stays hidden until MapLibre has loaded its style.
 */
async function waitForMap(page: Page, name: RegExp): Promise<void> {
	const map = page
		.locator('div[role="region"]')
		.and(page.getByRole('region', { name, includeHidden: true }));
	await map.evaluate((region) => region.scrollIntoView({ block: 'center' }));
	const canvas = map.locator('canvas').first();
	await canvas.waitFor();
	await page.waitForLoadState('networkidle');
	expect(await canvas.evaluate((c: HTMLCanvasElement) => c.width)).toBeGreaterThan(0);
}

async function finish({ context, page, problems }: WatchedPage): Promise<void> {
	// Reports are asynchronous: a last round-trip through the page lets the pending ones arrive.
	await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => setTimeout(r, 0))));
	await context.close();
	expect(problems).toEqual([]);
}

function policyOf(headers: Headers): Map<string, string[]> {
	const policy = headers.get('content-security-policy') ?? '';
	return new Map(
		policy
			.split(';')
			.map((d) => d.trim().split(/\s+/))
			.filter((d) => d[0])
			.map(([name, ...values]) => [name, values])
	);
}

describe('the content security policy in Chromium', () => {
	it('the watcher notices an inline script the policy refuses', async () => {
		const watched = await watchedPage();
		const { page, problems } = watched;
		await page.goto('/');
		await page.evaluate(() => {
			const script = document.createElement('script');
			script.textContent = 'window.__inlineRan = true;';
			document.body.append(script);
		});
		await expect
			.poll(() => problems.filter((p) => p.includes('script-src')).length)
			.toBeGreaterThan(0);
		expect(await page.evaluate(() => '__inlineRan' in window)).toBe(false);
		await watched.context.close();
	});

	it('public pages: home, patients, a journey map, a story, sign-in', async () => {
		const watched = await watchedPage();
		const { page } = watched;
		await page.goto('/');
		await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
		await page.goto('/patients');
		await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
		// Client-side navigation from the list to a patient with a published journey.
		await page.locator('a[href="/patients/perla"]').first().click();
		await page.waitForURL('**/patients/perla');
		await waitForMap(page, /journey/i);
		await page.goto('/stories/perla-swims-home');
		await page.getByRole('heading', { level: 1 }).waitFor();
		await openForm(page, '/signin');
		await finish(watched);
	});

	it('the adoption form, the test checkout and the thank-you page', async () => {
		const watched = await watchedPage();
		const { page } = watched;
		await openForm(page, '/patients/coralina/adopt');
		await page.getByRole('radio', { name: /Ripple/ }).check();
		await page.getByLabel('Your name').fill('Policy Visitor');
		await page.getByLabel('Your e-mail').fill(`policy.visitor.${Date.now()}@example.test`);
		await Promise.all([
			page.waitForURL(/\/fake-stripe\/checkout\//),
			page.getByRole('button', { name: 'Continue to payment' }).click()
		]);
		await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
		// The test-card buttons are the page's own script at work.
		await page
			.getByRole('button', { name: /^Use card 4242/ })
			.first()
			.click();
		await expect(page.getByLabel('Card number').inputValue()).resolves.toMatch(/^4242/);
		await page.getByLabel('Expiry (MM / YY)').fill('12 / 34');
		await page.getByLabel('CVC').fill('123');
		await Promise.all([
			page.waitForURL(/\/adopt\/thanks\?session_id=cs_/),
			page.getByRole('button', { name: /^Pay/ }).click()
		]);
		await page
			.getByRole('status')
			.filter({ hasText: 'adoption of Coralina is confirmed' })
			.waitFor({ timeout: 30_000 });
		await finish(watched);
	});

	it('a supporter’s account', async () => {
		const watched = await watchedPage();
		await signIn(watched.page, 'dolores.supporter@tideward.test');
		await watched.page.goto('/account');
		await watched.page.getByRole('region', { name: 'Your adoptions' }).waitFor();
		await finish(watched);
	});

	it('the staff start page and the Ledger dashboard with its charts', async () => {
		const watched = await watchedPage();
		const { page } = watched;
		await signIn(page, demoUser('development').email);
		await page.goto('/staff');
		await page.getByRole('heading', { level: 1 }).waitFor();
		await page.goto('/staff/ledger/dashboard');
		await page.locator('figure canvas[role="img"]').first().waitFor();
		await page.waitForFunction(() =>
			[...document.querySelectorAll('figure canvas')].every(
				(c) => (c as HTMLCanvasElement).width > 0
			)
		);
		await finish(watched);
	});

	it('the Tracking desk with its map', async () => {
		const watched = await watchedPage();
		await signIn(watched.page, demoUser('tracker').email);
		await openForm(watched.page, '/staff/tracking/perla');
		await waitForMap(watched.page, /track/i);
		await finish(watched);
	});

	it('the Newsroom story editor with its live preview', async () => {
		const watched = await watchedPage();
		const { page } = watched;
		await signIn(page, demoUser('educator').email);
		await openForm(page, '/staff/newsroom/stories/new');
		await page
			.getByLabel('Story (Markdown)')
			.fill('A **calm** day.\n\n<img src=x onerror="alert(1)">');
		await page.getByTestId('story-preview').locator('strong', { hasText: 'calm' }).waitFor();
		await finish(watched);
	});

	it('e-mail previews, whose srcdoc frames inherit the policy, with their <style> blocks', async () => {
		const watched = await watchedPage();
		const { page } = watched;
		await signIn(page, demoUser('admin').email);
		await page.goto('/staff/mail');
		await page.getByRole('row').nth(1).getByRole('link').first().click();
		await page.waitForURL(/\/staff\/mail\/[^/]+$/);
		const preview = page.locator('iframe[srcdoc]').first();
		await preview.waitFor();
		// MJML's <style> block applies inside the frame: its body loses the default 8px margin.
		const frame = await (await preview.elementHandle())!.contentFrame();
		expect(await frame!.evaluate(() => document.querySelectorAll('style').length)).toBeGreaterThan(
			0
		);
		expect(await frame!.evaluate(() => getComputedStyle(document.body).marginTop)).toBe('0px');
		await openForm(page, '/staff/mail/templates');
		await page.locator('a[href^="?template="]').first().click();
		await page.locator('iframe[srcdoc]').first().waitFor();
		await finish(watched);
	});
});

describe('response headers', () => {
	it('a page carries the policy, with a fresh nonce for its one inline script', async () => {
		const [first, second] = await Promise.all([fetch(`${baseURL()}/`), fetch(`${baseURL()}/`)]);
		expect(first.status).toBe(200);
		const policy = policyOf(first.headers);
		expect(Object.fromEntries(policy)).toMatchObject({
			'default-src': ["'self'"],
			// No nonce here: browsers would then ignore 'unsafe-inline'.
			'style-src': ["'self'", "'unsafe-inline'"],
			'img-src': ["'self'", 'data:', 'blob:'],
			'font-src': ["'self'"],
			'connect-src': ["'self'"],
			'worker-src': ["'self'"],
			'object-src': ["'none'"],
			'base-uri': ["'self'"],
			'frame-ancestors': ["'none'"]
		});
		expect(policy.get('form-action')?.[0]).toBe("'self'");
		const scriptSrc = policy.get('script-src') ?? [];
		expect(scriptSrc).toHaveLength(2);
		expect(scriptSrc[0]).toBe("'self'");
		const nonce = scriptSrc[1].match(/^'nonce-([A-Za-z0-9+/=]+)'$/)?.[1];
		expect(nonce).toBeDefined();
		expect(policy.get('script-src')).not.toContain("'unsafe-inline'");

		const html = await first.text();
		const inline = [...html.matchAll(/<script(?![^>]*\bsrc=)([^>]*)>/g)].filter(
			(m) => !/type="application\/(ld\+)?json"/.test(m[1])
		);
		expect(inline.length).toBeGreaterThan(0);
		for (const [, attributes] of inline) expect(attributes).toContain(`nonce="${nonce}"`);
		expect(policyOf(second.headers).get('script-src')?.[1]).not.toBe(`'nonce-${nonce}'`);

		expect(first.headers.get('x-content-type-options')).toBe('nosniff');
		expect(first.headers.get('x-frame-options')).toBe('DENY');
		expect(first.headers.get('referrer-policy')).toBe('strict-origin-when-cross-origin');
		// The test server is http://localhost: no HSTS there (the unit test covers https origins).
		expect(first.headers.has('strict-transport-security')).toBe(false);
	});

	it('an API answer, an image and a PDF carry the same headers, and only a framing policy', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, 'dolores.supporter@tideward.test');
		// Her demo adoption is paid through the test service when the server starts.
		let certificate: string | null = null;
		for (let attempt = 0; attempt < 20 && !certificate; attempt++) {
			await page.goto('/account');
			certificate = await page
				.locator('a[href$="/certificate.pdf"]')
				.first()
				.getAttribute('href', { timeout: 1_000 })
				.catch(() => null);
		}
		expect(certificate).not.toBeNull();
		const cookie = (await context.cookies()).find((c) => c.name === SESSION_COOKIE)!;
		await context.close();

		const answers = [
			['/api/patients', /^application\/json/, {}],
			['/patients/perla/journey.png', /^image\/png/, {}],
			[certificate!, /^application\/pdf/, { cookie: `${SESSION_COOKIE}=${cookie.value}` }]
		] as const;
		for (const [path, type, headers] of answers) {
			const response = await fetch(`${baseURL()}${path}`, { headers });
			expect(response.status, path).toBe(200);
			expect(response.headers.get('content-type'), path).toMatch(type);
			expect(response.headers.get('x-content-type-options'), path).toBe('nosniff');
			expect(response.headers.get('x-frame-options'), path).toBe('DENY');
			expect(response.headers.get('referrer-policy'), path).toBe('strict-origin-when-cross-origin');
			// A wider policy would stop Chromium's PDF viewer from drawing the document.
			expect(response.headers.get('content-security-policy'), path).toBe("frame-ancestors 'none'");
			expect(response.headers.has('strict-transport-security'), path).toBe(false);
		}
	});

	it('a refused cross-site form post carries them too', async () => {
		const response = await fetch(`${baseURL()}/signin?/password`, {
			method: 'POST',
			headers: {
				'content-type': 'application/x-www-form-urlencoded',
				origin: 'https://elsewhere.example'
			},
			body: 'email=a%40example.test&password=x'
		});
		expect(response.status).toBe(403);
		expect(response.headers.get('x-frame-options')).toBe('DENY');
		expect(response.headers.get('x-content-type-options')).toBe('nosniff');
	});
});

describe('the session cookie', () => {
	it('is set at sign-in as HttpOnly, SameSite=Lax, Path=/, and not Secure on http', async () => {
		const response = await fetch(`${baseURL()}/signin?/password`, {
			method: 'POST',
			redirect: 'manual',
			headers: {
				'content-type': 'application/x-www-form-urlencoded',
				// As a browser posting the form without JavaScript: SvelteKit answers with a redirect.
				accept: 'text/html',
				origin: baseURL()
			},
			body: new URLSearchParams({
				email: demoUser('supporter').email,
				password: DEMO_PASSWORD
			}).toString()
		});
		expect(response.status).toBe(303);
		const cookies = response.headers.getSetCookie();
		expect(cookies).toHaveLength(1);
		const [pair, ...attributes] = cookies[0].split(';').map((part) => part.trim());
		expect(pair).toMatch(new RegExp(`^${SESSION_COOKIE}=[a-z0-9]{20,}$`));
		const lower = attributes.map((a) => a.toLowerCase());
		expect(lower).toContain('httponly');
		expect(lower).toContain('samesite=lax');
		expect(lower).toContain('path=/');
		// The test server's origin is http://localhost; on an https origin the cookie is Secure
		// (tests/integration/session-cookie.test.ts).
		expect(lower).not.toContain('secure');
		expect(lower.some((a) => a.startsWith('max-age=') || a.startsWith('expires='))).toBe(true);
	});

	it('the browser keeps it as the server set it', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('supporter').email);
		const cookie = (await context.cookies()).find((c) => c.name === SESSION_COOKIE);
		expect(cookie).toMatchObject({ httpOnly: true, sameSite: 'Lax', path: '/', secure: false });
		// Scripts on the page cannot read it.
		expect(await page.evaluate(() => document.cookie)).not.toContain(SESSION_COOKIE);
		await context.close();
	});

	it('is never set for a signed-out visitor on public pages', async () => {
		for (const path of [
			'/',
			'/patients',
			'/patients/perla',
			'/stories',
			'/stories/perla-swims-home',
			'/signin',
			'/api/patients',
			'/patients/perla/journey.png'
		]) {
			const response = await fetch(`${baseURL()}${path}`);
			expect(response.status, path).toBe(200);
			expect(response.headers.getSetCookie(), path).toEqual([]);
		}
		const { context, page } = await newPage(browser());
		await page.goto('/patients/perla');
		await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
		expect(await context.cookies()).toEqual([]);
		await context.close();
	});
});
