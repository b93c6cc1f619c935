import { describe, expect, it } from 'vitest';
import { ROLES, type Role } from '$lib/roles';
import { STAFF_AREAS } from '$lib/staff-areas';
import { demoUser, newPage, openForm, signIn, useBrowser } from './browser';

const browser = useBrowser();

const PAGES = ['/account', '/staff', ...Object.values(STAFF_AREAS).map((a) => a.href)];

function expectedStatus(role: Role, path: string): number {
	if (path === '/account') return 200;
	if (path === '/staff') return role === 'supporter' ? 403 : 200;
	const area = Object.values(STAFF_AREAS).find((a) => a.href === path);
	return area && (area.roles as readonly Role[]).includes(role) ? 200 : 403;
}

describe('each role signs in and reaches only its areas', () => {
	for (const role of ROLES) {
		it(`${role}: lands on its home and is refused elsewhere`, async () => {
			const { context, page } = await newPage(browser());
			const user = demoUser(role);
			await signIn(page, user.email);
			expect(new URL(page.url()).pathname).toBe(role === 'supporter' ? '/account' : '/staff');

			const seen: Record<string, number> = {};
			const wanted: Record<string, number> = {};
			for (const path of PAGES) {
				const response = await page.goto(path);
				seen[path] = response?.status() ?? 0;
				wanted[path] = expectedStatus(role, path);
			}
			expect(seen).toEqual(wanted);

			if (role !== 'supporter') {
				await page.goto('/staff');
				const nav = page.getByRole('navigation', { name: 'Staff areas' });
				const links = await nav.getByRole('link').allTextContents();
				const reachable = Object.values(STAFF_AREAS)
					.filter((a) => (a.roles as readonly Role[]).includes(role))
					.map((a) => a.label);
				expect(links.map((l) => l.trim())).toEqual(['Overview', ...reachable]);
			}
			await context.close();
		});
	}

	it('a visitor is sent to sign in, and comes back after', async () => {
		const { context, page } = await newPage(browser());
		await openForm(page, '/staff/settings');
		expect(new URL(page.url()).pathname).toBe('/signin');
		expect(new URL(page.url()).searchParams.get('redirectTo')).toBe('/staff/settings');
		const form = page.locator('form[action="?/password"]');
		await form.getByLabel('E-mail').fill(demoUser('admin').email);
		await form
			.getByLabel('Password')
			.fill((await import('$lib/server/db/seed/demo')).DEMO_PASSWORD);
		await Promise.all([
			page.waitForURL('**/staff/settings'),
			form.getByRole('button', { name: 'Sign in' }).click()
		]);
		await expect(page.getByRole('heading', { level: 1 }).textContent()).resolves.toBe('Settings');
		await context.close();
	});

	it('a staff form action is refused on the server without the role', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('educator').email);
		const response = await page.request.post('/staff/users?/grant', {
			form: { userId: 'anyone', role: 'admin' },
			headers: { origin: new URL(page.url()).origin }
		});
		expect(response.status()).toBe(403);
		await context.close();
	});

	it('signing out ends the session on the server, not just in the browser', async () => {
		const { context, page } = await newPage(browser());
		await signIn(page, demoUser('supporter').email);
		const cookies = await context.cookies();
		const session = cookies.find((c) => c.name === 'tideward_session');
		expect(session?.httpOnly).toBe(true);
		expect(session?.sameSite).toBe('Lax');
		await page.getByRole('button', { name: /sign out/i }).click();
		await page.waitForURL((url) => url.pathname === '/');

		const replay = await newPage(browser());
		await replay.context.addCookies(cookies);
		await replay.page.goto('/account');
		expect(new URL(replay.page.url()).pathname).toBe('/signin');
		await replay.context.close();
		await context.close();
	});
});
