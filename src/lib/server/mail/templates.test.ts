import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { parse, type DefaultTreeAdapterMap, type ParserError } from 'parse5';
import { describe, expect, it } from 'vitest';
import {
	emailsDir,
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
				: /(Link|Url)$/.test(key)
					? urlFor(key)
					: key === 'minutes' || key === 'days' || key === 'daysSinceRelease'
						? 17
						: hostile;
	}
	return vars as TemplateVars<N>;
}

/** A distinct absolute URL per link variable, with a query that needs escaping in HTML. */
const urlFor = (key: string) => `http://127.0.0.1:3000/t/${key}?token=abc&next=%2Fstaff`;

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

type Node = DefaultTreeAdapterMap['childNode'];
type Element = DefaultTreeAdapterMap['element'];

/**
 * Every element as a browser's parser (parse5, per WHATWG) sees it, and the syntax errors the
 * parser reports (the tokenizer's: duplicate or run-together attributes, bad character
 * references, unclosed comments, …).
 */
function parseHtml(html: string): { elements: Element[]; errors: ParserError[] } {
	const errors: ParserError[] = [];
	const document = parse(html, { onParseError: (e) => errors.push(e) });
	const elements: Element[] = [];
	const walk = (nodes: Node[]) => {
		for (const node of nodes) {
			if ('tagName' in node) {
				elements.push(node);
				walk(node.childNodes as Node[]);
			}
		}
	};
	walk(document.childNodes as Node[]);
	return { elements, errors };
}

const textOf = (element: Element) =>
	element.childNodes.map((c) => ('value' in c ? c.value : '')).join('');

const attr = (element: Element, name: string) => element.attrs.find((a) => a.name === name)?.value;

const UPDATE_TEMPLATES = TEMPLATE_NAMES.filter((name) =>
	(TEMPLATE_VARIABLES[name] as readonly string[]).includes('unsubscribeLink')
);

describe('every template', () => {
	it('includes the four supporter updates with an unsubscribe link', () => {
		expect([...UPDATE_TEMPLATES].sort()).toEqual([
			'field-note',
			'homecoming-update',
			'last-signal',
			'waypoint-update'
		]);
	});

	it.each(TEMPLATE_NAMES)(
		'%s: no HTML syntax errors, images have alt text, links are absolute',
		async (name) => {
			const { subject, html } = await renderEmail(name, varsFor(name));
			const { elements, errors } = parseHtml(html);
			expect(errors.map((e) => `${e.code} at line ${e.startLine}`)).toEqual([]);
			const titles = elements.filter((e) => e.tagName === 'title');
			expect(titles.map((t) => textOf(t))).toEqual([subject]);

			const images = elements.filter((e) => e.tagName === 'img');
			for (const image of images) expect(attr(image, 'alt')?.trim()).toBeTruthy();

			const urls = elements.flatMap((e) =>
				e.attrs.filter((a) => a.name === 'href' || a.name === 'src').map((a) => a.value)
			);
			expect(urls.length).toBeGreaterThan(0);
			for (const url of urls) expect(url).toMatch(/^(https?:\/\/[^\s/]|mailto:)/i);
			// Every link variable reaches the HTML as a link (or an image) of its own.
			for (const key of TEMPLATE_VARIABLES[name] as readonly string[]) {
				if (/(Link|Url)$/.test(key)) expect(urls).toContain(urlFor(key));
			}
		}
	);

	it.each(TEMPLATE_NAMES)('%s: carries the postal address in both parts', async (name) => {
		const mail = await renderEmail(name, {
			...varsFor(name),
			orgAddress: 'Calle del Muelle 12\nArenas Tibias, PR 00799'
		});
		expect(mail.html).toContain('Calle del Muelle 12<br />Arenas Tibias, PR 00799');
		expect(mail.text).toContain('Calle del Muelle 12\nArenas Tibias, PR 00799');
	});
});

describe('supporter updates', () => {
	it.each(UPDATE_TEMPLATES)(
		'%s: says why it came and how to stop it, in both parts',
		async (name) => {
			const reason = 'You receive these updates because you adopted Marea.';
			const mail = await renderEmail(name, { ...varsFor(name), reason } as never);
			const { elements } = parseHtml(mail.html);
			const linkText = (href: string) =>
				elements.filter((e) => e.tagName === 'a' && attr(e, 'href') === href).map(textOf);

			expect(linkText(urlFor('unsubscribeLink'))).toEqual(['Unsubscribe from these updates']);
			expect(linkText(urlFor('preferencesLink'))).toEqual(['Choose which e-mails you get']);
			expect(mail.html).toContain(reason);

			expect(mail.text).toContain(`Unsubscribe from these updates: ${urlFor('unsubscribeLink')}`);
			expect(mail.text).toContain(`Choose which e-mails you get: ${urlFor('preferencesLink')}`);
			expect(mail.text).toContain(reason);
		}
	);

	it.each(UPDATE_TEMPLATES)('%s: the text part holds the shared update footer', (name) => {
		// Text partials are not included for us, so each .txt carries its own copy.
		const read = (file: string) => readFileSync(join(emailsDir(), file), 'utf8').trim();
		expect(read(`${name}.txt`)).toContain(read('partials/update-footer.txt'));
	});

	it.each(UPDATE_TEMPLATES)('%s: names the patient in the subject', async (name) => {
		const mail = await renderEmail(name, { ...varsFor(name), patientName: 'Marea' } as never);
		expect(mail.subject).toContain('Marea');
		expect(mail.subject.length).toBeLessThanOrEqual(80);
	});

	it('shows the photo and the map with the alt text given', async () => {
		const homecoming = parseHtml(
			(
				await renderEmail('homecoming-update', {
					...varsFor('homecoming-update'),
					photoAlt: 'Marea on the sand before release'
				})
			).html
		).elements.filter((e) => e.tagName === 'img');
		expect(homecoming.map((e) => [attr(e, 'src'), attr(e, 'alt')])).toEqual([
			[urlFor('photoUrl'), 'Marea on the sand before release']
		]);

		const waypoint = parseHtml(
			(
				await renderEmail('waypoint-update', {
					...varsFor('waypoint-update'),
					mapAlt: 'Map of the journey up to May 2'
				})
			).html
		).elements.filter((e) => e.tagName === 'img');
		expect(waypoint.map((e) => [attr(e, 'src'), attr(e, 'alt')])).toEqual([
			[urlFor('mapUrl'), 'Map of the journey up to May 2']
		]);
	});

	it('reads well without a release story', async () => {
		const mail = await renderEmail('homecoming-update', {
			...varsFor('homecoming-update'),
			patientName: 'Marea',
			releaseStory: ''
		});
		expect(mail.text).toContain('the state wildlife\nagency authorised the release. \n');
		expect(mail.text).not.toMatch(/\n{3,}/);
	});

	it('last signal: the staff note is shown as written, and nothing else speaks of the fate', async () => {
		const farewell = 'Line one of the note.\nLine two, after a break.';
		const vars = { ...varsFor('last-signal'), patientName: 'Marea', farewell };
		const mail = await renderEmail('last-signal', vars);
		expect(mail.text).toContain(farewell);
		expect(mail.html).toContain('Line one of the note.<br />Line two, after a break.');

		// Words about life or death come only from the staff: the template itself stays neutral.
		const fate =
			/\b(died|dead|death|die|alive|living|surviv\w*|lost|passed away|safe|healthy|memory|rest)\b/i;
		for (const part of [mail.subject, mail.text, mail.html.replace(/<[^>]*>/g, ' ')]) {
			expect(part.replaceAll(farewell, '')).not.toMatch(fate);
		}
	});
});
