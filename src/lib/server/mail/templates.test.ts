import { describe, expect, it } from 'vitest';
import {
	TEMPLATE_NAMES,
	TEMPLATE_VARIABLES,
	renderEmail,
	type TemplateName,
	type TemplateVars
} from './templates';

const hostile = `<script>alert("hi")</script> & 'Bo'`;

function varsFor<N extends TemplateName>(name: N): TemplateVars<N> {
	const vars: Record<string, string | number> = {
		orgName: 'Saltmarsh Turtle Hospital',
		orgAddress: '12 Dune Road\nPort Example, EX 00000',
		siteUrl: 'http://127.0.0.1:3000'
	};
	for (const key of TEMPLATE_VARIABLES[name]) {
		vars[key] =
			key === 'link'
				? 'http://127.0.0.1:3000/auth/x?token=abc&next=%2Fstaff'
				: key === 'minutes' || key === 'days'
					? 17
					: hostile;
	}
	return vars as TemplateVars<N>;
}

describe('renderEmail', () => {
	it.each(TEMPLATE_NAMES)('%s: fills every placeholder, escaped in HTML only', async (name) => {
		const vars = varsFor(name);
		const mail = await renderEmail(name, vars);

		for (const part of [mail.subject, mail.html, mail.text]) expect(part).not.toMatch(/\{\{|\}\}/);
		expect(mail.subject.length).toBeGreaterThan(5);
		expect(mail.subject).not.toMatch(/[\r\n]/);

		expect(mail.html).not.toContain('<script>alert');
		expect(mail.html).toContain(
			'&lt;script&gt;alert(&quot;hi&quot;)&lt;/script&gt; &amp; &#39;Bo&#39;'
		);
		expect(mail.html).toContain('12 Dune Road<br />Port Example, EX 00000');
		expect(mail.html).toContain('Saltmarsh Turtle Hospital');
		expect(mail.html).toMatch(/^<!doctype html>/i);

		expect(mail.text.trim().length).toBeGreaterThan(50);
		expect(mail.text).toContain(hostile);
		expect(mail.text).toContain('12 Dune Road\nPort Example, EX 00000');
		expect(mail.text.replaceAll(hostile, '')).not.toMatch(/<[a-z]/i);
	});

	it('puts links in the button and the text part', async () => {
		const mail = await renderEmail('sign-in-link', varsFor('sign-in-link'));
		expect(mail.html).toContain('href="http://127.0.0.1:3000/auth/x?token=abc&amp;next=%2Fstaff"');
		expect(mail.text).toContain('http://127.0.0.1:3000/auth/x?token=abc&next=%2Fstaff');
		expect(mail.text).toContain('17 minutes');
		expect(mail.text).toMatch(/did not ask/);
	});

	it('puts the inviter and expiry in a staff invitation', async () => {
		const mail = await renderEmail('staff-invite', {
			...varsFor('staff-invite'),
			inviterName: 'Ana Reef',
			days: 7
		});
		expect(mail.subject).toBe('Ana Reef invited you to the Saltmarsh Turtle Hospital staff area');
		expect(mail.text).toContain('open for 7 days');
	});

	it('refuses to render with a variable missing', async () => {
		const vars: Partial<TemplateVars<'password-reset'>> = varsFor('password-reset');
		delete vars.link;
		await expect(
			renderEmail('password-reset', vars as TemplateVars<'password-reset'>)
		).rejects.toThrow(/\{\{link\}\}/);
	});
});
