import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core';
import { afterAll, beforeAll, inject } from 'vitest';
import { DEMO_PASSWORD, DEMO_USERS } from '$lib/server/db/seed/demo';
import type { Role } from '$lib/roles';

export const baseURL = () => inject('baseURL');

/** One Chromium per test file; each test takes a fresh context (its own cookies). */
export function useBrowser(): () => Browser {
	let browser: Browser | undefined;
	beforeAll(async () => {
		browser = await chromium.launch({
			executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
			args: [
				'--headless',
				'--no-sandbox',
				'--disable-gpu',
				'--disable-background-networking',
				'--disable-component-update',
				'--disable-sync',
				'--no-first-run'
			]
		});
	});
	afterAll(async () => {
		await browser?.close();
	});
	return () => {
		if (!browser) throw new Error('Chromium has not started.');
		return browser;
	};
}

export async function newPage(browser: Browser): Promise<{ context: BrowserContext; page: Page }> {
	const context = await browser.newContext({ baseURL: baseURL() });
	return { context, page: await context.newPage() };
}

/** The demo account that holds exactly this one role. */
export function demoUser(role: Role) {
	const user = DEMO_USERS.find((u) => u.roles.length === 1 && u.roles[0] === role);
	if (!user) throw new Error(`The demo scenario has no user with only the ${role} role.`);
	return user;
}

/**
 * Opens a page with a form and waits until it is hydrated: typing into inputs before hydration
 * can be undone when Svelte takes the inputs over.
 */
export async function openForm(page: Page, path: string): Promise<void> {
	await page.goto(path);
	await waitForHydration(page);
}

/** Waits for the root layout to mark the document as hydrated. */
export async function waitForHydration(page: Page): Promise<void> {
	await page.locator('html[data-hydrated]').waitFor({ state: 'attached' });
}

/** Page object for the sign-in page. */
export class SignInPage {
	constructor(private readonly page: Page) {}

	async open(redirectTo?: string) {
		await this.page.goto(
			redirectTo ? `/signin?redirectTo=${encodeURIComponent(redirectTo)}` : '/signin'
		);
		await waitForHydration(this.page);
	}

	async withPassword(email: string, password = DEMO_PASSWORD) {
		const form = this.page.locator('form[action="?/password"]');
		await form.getByLabel('E-mail').fill(email);
		await form.getByLabel('Password').fill(password);
		await form.getByRole('button', { name: 'Sign in' }).click();
		// Either we leave the sign-in page or it shows why not.
		await Promise.race([
			this.page.waitForURL((url) => url.pathname !== '/signin', { timeout: 20_000 }),
			this.page.getByRole('alert').waitFor({ timeout: 20_000 })
		]);
	}

	async alert(): Promise<string | null> {
		const alert = this.page.getByRole('alert');
		return (await alert.count()) ? alert.first().textContent() : null;
	}

	async askForLink(email: string) {
		const form = this.page.locator('form[action="?/link"]');
		await form.getByLabel('E-mail').fill(email);
		await form.getByRole('button', { name: 'E-mail me a link' }).click();
		await this.page.getByRole('status').waitFor();
	}
}

export async function signIn(page: Page, email: string): Promise<void> {
	const signin = new SignInPage(page);
	await signin.open();
	await signin.withPassword(email);
	if (new URL(page.url()).pathname === '/signin') {
		throw new Error(`Signing in as ${email} failed: ${await signin.alert()}`);
	}
}

/**
 * Reads the caught mail as an administrator (through the staff mailbox, as a person would) until
 * a message to `to` contains a link matching `path`; returns that link's path and query.
 */
export async function linkFromCaughtMail(admin: Page, to: string, path: RegExp): Promise<string> {
	for (let attempt = 0; attempt < 40; attempt++) {
		await admin.goto('/staff/mail');
		// Newest first; other tests also mail this address, so look through its recent messages.
		const hrefs = await admin
			.getByRole('row')
			.filter({ hasText: to })
			.getByRole('link')
			.evaluateAll((links) => links.slice(0, 10).map((a) => a.getAttribute('href') ?? ''));
		for (const href of hrefs.filter(Boolean)) {
			await admin.goto(href);
			const body = (await admin.content()).replaceAll('&amp;', '&');
			const found = body.match(new RegExp(`https?://[^\\s"'<>]+${path.source}[^\\s"'<>]*`));
			if (found) {
				const url = new URL(found[0]);
				return url.pathname + url.search;
			}
		}
		await new Promise((r) => setTimeout(r, 500));
	}
	throw new Error(`No mail to ${to} with a link like ${path} arrived.`);
}
