import type { Page } from 'playwright-core';
import { describe, expect, it } from 'vitest';
import { newPage, useBrowser, waitForHydration } from './browser';

// An adoption from the home page to the thank-you page with the keyboard alone: no clicks, and no
// navigation but where the keys lead (WCAG 2.1.1 Keyboard, 2.4.7 Focus Visible).

const browser = useBrowser();

/** What a keyboard user meets on the focused element. */
interface Focused {
	tag: string;
	type: string;
	/** Its visible text, or for a form control the text of its label. */
	name: string;
	href: string;
	checked: boolean;
	value: string;
	outlineStyle: string;
	outlineWidth: number;
}

function focused(page: Page): Promise<Focused | null> {
	return page.evaluate(() => {
		const el = document.activeElement as HTMLElement | null;
		if (!el || el === document.body) return null;
		const control = el as HTMLInputElement;
		const labels = control.labels ? [...control.labels].map((l) => l.textContent ?? '') : [];
		const style = getComputedStyle(el);
		return {
			tag: el.tagName.toLowerCase(),
			type: control.type ?? '',
			name: (labels.join(' ') || el.textContent || '').replace(/\s+/g, ' ').trim(),
			href: el.getAttribute('href') ?? '',
			checked: Boolean(control.checked),
			value: typeof control.value === 'string' ? control.value : '',
			outlineStyle: style.outlineStyle,
			outlineWidth: parseFloat(style.outlineWidth) || 0
		};
	});
}

/** Presses Tab (or Shift+Tab) until the focused element is the one wanted. */
async function tabTo(
	page: Page,
	wanted: (f: Focused) => boolean,
	what: string,
	key: 'Tab' | 'Shift+Tab' = 'Tab'
): Promise<Focused> {
	const seen: string[] = [];
	for (let i = 0; i < 80; i++) {
		await page.keyboard.press(key);
		const f = await focused(page);
		if (f && wanted(f)) return f;
		seen.push(f ? `${f.tag}:${f.name.slice(0, 30)}` : '(nothing)');
	}
	throw new Error(`${key} never reached ${what}; it went through: ${seen.join(' | ')}`);
}

/** The focus ring of our stylesheet: a solid outline at least 2 px wide. */
function expectVisibleFocus(f: Focused) {
	expect(f.outlineStyle, `outline of the focused ${f.tag} “${f.name}”`).not.toBe('none');
	expect(f.outlineWidth, `outline of the focused ${f.tag} “${f.name}”`).toBeGreaterThanOrEqual(2);
}

describe('adopting with the keyboard alone', () => {
	it('home → patients → Coralina → adoption form → test payment → thank-you', async () => {
		const { context, page } = await newPage(browser());
		await page.goto('/');
		await waitForHydration(page);

		// The skip link comes first and is visible when focused.
		const skip = await tabTo(page, (f) => f.name === 'Skip to main content', 'the skip link');
		expectVisibleFocus(skip);
		expect(await page.getByRole('link', { name: 'Skip to main content' }).isVisible()).toBe(true);

		// The hero's call to action, on the dark surface.
		const meet = await tabTo(page, (f) => f.name === 'Meet our patients', 'Meet our patients');
		expectVisibleFocus(meet);
		await Promise.all([page.waitForURL('**/patients'), page.keyboard.press('Enter')]);
		await waitForHydration(page);

		// Search by name, then go to the card.
		const search = await tabTo(page, (f) => f.name === 'Name' && f.tag === 'input', 'the search');
		expectVisibleFocus(search);
		await page.keyboard.type('Coralina');
		await page
			.getByRole('status')
			.filter({ hasText: /^\s*1 patient/ })
			.waitFor();
		const card = await tabTo(
			page,
			(f) => f.tag === 'a' && f.href === '/patients/coralina',
			'Coralina’s card'
		);
		expectVisibleFocus(card);
		await Promise.all([page.waitForURL('**/patients/coralina'), page.keyboard.press('Enter')]);
		await waitForHydration(page);

		const adopt = await tabTo(page, (f) => f.name === 'Adopt Coralina', 'Adopt Coralina');
		expectVisibleFocus(adopt);
		await Promise.all([
			page.waitForURL('**/patients/coralina/adopt'),
			page.keyboard.press('Enter')
		]);
		await waitForHydration(page);

		// The levels are one radio group: Tab enters it on the chosen level, arrows change it.
		const level = await tabTo(page, (f) => f.type === 'radio', 'the levels');
		expect(level.name).toMatch(/^Ripple/);
		expect(level.checked).toBe(true);
		expectVisibleFocus(level);
		await page.keyboard.press('ArrowDown');
		const swell = await focused(page);
		expect(swell?.name).toMatch(/^Swell/);
		expect(swell?.checked).toBe(true);
		// …and back with Shift+Tab from the next field, to show the group keeps the choice.
		await tabTo(page, (f) => f.name.startsWith('Amount'), 'the amount');
		const back = await tabTo(page, (f) => f.type === 'radio', 'the levels', 'Shift+Tab');
		expect(back.name).toMatch(/^Swell/);

		const me = await tabTo(page, (f) => f.type === 'radio' && f.name === 'Me', 'who it is for');
		expect(me.checked).toBe(true);
		await tabTo(page, (f) => f.name === 'Your name', 'Your name');
		await page.keyboard.type('Keyboard Supporter');
		await tabTo(page, (f) => f.name === 'Your e-mail', 'Your e-mail');
		await page.keyboard.type('keyboard.supporter@example.test');
		const next = await tabTo(page, (f) => f.name === 'Continue to payment', 'the submit button');
		expectVisibleFocus(next);
		await Promise.all([page.waitForURL(/\/fake-stripe\/checkout\//), page.keyboard.press('Enter')]);
		await waitForHydration(page);

		// The test payment page: a listed test card is taken with its button, the rest typed.
		const useCard = await tabTo(
			page,
			(f) => f.tag === 'button' && f.name.includes('4242 4242 4242 4242'),
			'the button that uses the 4242 test card'
		);
		expectVisibleFocus(useCard);
		await page.keyboard.press('Space');
		const cardNumber = await tabTo(page, (f) => f.name === 'Card number', 'Card number');
		expect(cardNumber.value.replace(/\s/g, '')).toBe('4242424242424242');
		await tabTo(page, (f) => f.name === 'Expiry (MM / YY)', 'the expiry');
		await page.keyboard.type('12 / 34');
		await tabTo(page, (f) => f.name === 'CVC', 'the CVC');
		await page.keyboard.type('123');
		const pay = await tabTo(page, (f) => f.tag === 'button' && f.name.startsWith('Pay'), 'Pay');
		expectVisibleFocus(pay);
		await Promise.all([
			page.waitForURL(/\/adopt\/thanks\?session_id=cs_/),
			page.keyboard.press('Enter')
		]);

		await page
			.getByRole('status')
			.filter({ hasText: 'adoption of Coralina is confirmed' })
			.waitFor({ timeout: 30_000 });
		await expect(page.getByRole('status').textContent()).resolves.toMatch(/Swell/);
		await context.close();
	});
});
