import { describe, expect, it } from 'vitest';
import { demoUser, linkFromCaughtMail, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

describe('administrators manage staff', () => {
	it('invites a tracker, who sets a password from the e-mail and reaches only the Tracking desk', async () => {
		const admin = await newPage(browser());
		await signIn(admin.page, demoUser('admin').email);
		await openForm(admin.page, '/staff/users');
		const invite = admin.page.locator('form[action="?/invite"]');
		await invite.getByLabel('Name').fill('Noemi Newhire');
		await invite.getByLabel('E-mail').fill('noemi.newhire@tideward.test');
		await invite.getByLabel('Tracking').check();
		await invite.getByRole('button', { name: 'Send invitation' }).click();
		await admin.page
			.getByRole('status')
			.filter({ hasText: 'Invitation sent to noemi.newhire@tideward.test' })
			.waitFor();

		const link = await linkFromCaughtMail(
			admin.page,
			'noemi.newhire@tideward.test',
			/\/invite\/[a-z0-9]+/
		);
		const invitee = await newPage(browser());
		await openForm(invitee.page, link);
		await invitee.page.getByLabel('New password', { exact: true }).fill('tracking desk 2026');
		await invitee.page.getByLabel('Repeat the new password').fill('tracking desk 2026');
		await Promise.all([
			invitee.page.waitForURL('**/staff'),
			invitee.page.getByRole('button', { name: 'Set my password' }).click()
		]);
		const nav = invitee.page.getByRole('navigation', { name: 'Staff areas' });
		expect((await nav.getByRole('link').allTextContents()).map((t) => t.trim())).toEqual([
			'Overview',
			'Tracking desk'
		]);
		expect((await invitee.page.goto('/staff/ledger'))?.status()).toBe(403);

		await admin.page.goto('/staff/audit');
		await expect(admin.page.getByRole('table').textContent()).resolves.toContain('staff.invited');
		await admin.context.close();
		await invitee.context.close();
	});

	it('a disabled account is signed out at once', async () => {
		const admin = await newPage(browser());
		await signIn(admin.page, demoUser('admin').email);
		const member = await newPage(browser());
		const target = demoUser('development');
		await signIn(member.page, target.email);
		expect((await member.page.goto('/staff/ledger'))?.status()).toBe(200);

		await openForm(admin.page, '/staff/users');
		const card = admin.page.locator(`[data-person="${target.email}"]`);
		await card.getByRole('button', { name: /^Disable account/ }).click();
		await admin.page.getByRole('status').filter({ hasText: 'Account disabled' }).waitFor();

		await member.page.goto('/staff/ledger');
		expect(new URL(member.page.url()).pathname).toBe('/signin');

		await card.getByRole('button', { name: /^Enable account/ }).click();
		await admin.page.getByRole('status').filter({ hasText: 'Account enabled' }).waitFor();
		await signIn(member.page, target.email);
		expect((await member.page.goto('/staff/ledger'))?.status()).toBe(200);
		await admin.context.close();
		await member.context.close();
	});
});
