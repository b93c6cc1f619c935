import { spawn } from 'node:child_process';
import { inject } from 'vitest';
import { describe, expect, it } from 'vitest';
import {
	demoUser,
	linkFromCaughtMail,
	newPage,
	openForm,
	SignInPage,
	signIn,
	useBrowser
} from './browser';

const browser = useBrowser();

describe('sign-in', () => {
	it('a sign-in link arrives in the caught mail and works once', async () => {
		const supporter = demoUser('supporter');
		const asker = await newPage(browser());
		await new SignInPage(asker.page).open();
		await new SignInPage(asker.page).askForLink(supporter.email);

		const admin = await newPage(browser());
		await signIn(admin.page, demoUser('admin').email);
		const link = await linkFromCaughtMail(admin.page, supporter.email, /\/signin\/link\/[a-z0-9]+/);

		const visitor = await newPage(browser());
		await visitor.page.goto(link);
		await Promise.all([
			visitor.page.waitForURL('**/account'),
			visitor.page.getByRole('button', { name: 'Sign me in' }).click()
		]);
		await expect(visitor.page.getByRole('heading', { level: 1 }).textContent()).resolves.toContain(
			supporter.name
		);

		const again = await newPage(browser());
		await again.page.goto(link);
		await expect(again.page.getByRole('alert').textContent()).resolves.toContain(
			'has been used or has expired'
		);
		for (const p of [asker, admin, visitor, again]) await p.context.close();
	});

	it('wrong credentials get one generic message; bad input gets a field error', async () => {
		const { context, page } = await newPage(browser());
		const signin = new SignInPage(page);
		await signin.open();
		await signin.withPassword(demoUser('educator').email, 'not-the-password');
		await expect(page.getByRole('alert').textContent()).resolves.toContain(
			'That e-mail and password do not match an account.'
		);
		await signin.withPassword('nobody@tideward.test', 'not-the-password');
		await expect(page.getByRole('alert').textContent()).resolves.toContain(
			'That e-mail and password do not match an account.'
		);

		await openForm(page, '/signup');
		await page.getByLabel('Your name').fill('Test Person');
		await page.getByLabel('E-mail').fill('not-an-address');
		await page.getByLabel('E-mail').evaluate((el) => el.removeAttribute('type'));
		await page.getByRole('button', { name: 'Create account' }).click();
		await expect(page.locator('#field-email-error').textContent()).resolves.toContain(
			'Enter an e-mail address like name@example.org.'
		);
		await context.close();
	});

	it('a second server on the same data folder refuses to start', async () => {
		const child = spawn(process.execPath, ['server.js'], {
			env: { ...process.env, PORT: '0', DATA_DIR: inject('dataDir'), TIDEWARD_DEMO: '' },
			stdio: ['ignore', 'pipe', 'pipe']
		});
		let output = '';
		child.stdout.on('data', (d) => (output += d));
		child.stderr.on('data', (d) => (output += d));
		const code = await new Promise<number | null>((resolve) => {
			const timer = setTimeout(() => {
				child.kill('SIGKILL');
				resolve(null);
			}, 30_000);
			child.once('exit', (c) => {
				clearTimeout(timer);
				resolve(c);
			});
		});
		expect(code).toBe(1);
		expect(output).toContain('is in use by another Tideward process');
		const health = await fetch(`${inject('baseURL')}/healthz`);
		expect(health.status).toBe(200);
	});
});
