import { Marked } from 'marked';
import sanitizeHtml from 'sanitize-html';

// A Marked instance of our own so that no other module's options leak into stories.
const marked = new Marked({ gfm: true, breaks: false, async: false });

/**
 * The only markup a story may contain. Anything else (script, style, iframe, forms, event
 * handlers, style attributes, javascript: and data: URLs) is removed. Images may only come from
 * our own /media/ store: photos stay cleaned of location data and nothing is fetched from a
 * third party when a supporter reads a story.
 */
export const STORY_HTML_POLICY: sanitizeHtml.IOptions = {
	allowedTags: [
		'p',
		'h2',
		'h3',
		'h4',
		'strong',
		'em',
		'del',
		'a',
		'ul',
		'ol',
		'li',
		'blockquote',
		'code',
		'pre',
		'hr',
		'br',
		'img',
		'table',
		'thead',
		'tbody',
		'tr',
		'th',
		'td'
	],
	allowedAttributes: {
		a: ['href', 'title', 'rel', 'target'],
		img: ['src', 'alt', 'title', 'width', 'height', 'loading'],
		th: ['align'],
		td: ['align']
	},
	allowedSchemes: ['http', 'https', 'mailto'],
	allowedSchemesByTag: { img: [] },
	allowedSchemesAppliedToAttributes: ['href', 'src'],
	allowProtocolRelative: false,
	disallowedTagsMode: 'discard',
	exclusiveFilter: (frame) =>
		frame.tag === 'img' && !/^\/media\/[\w-]+\//.test(frame.attribs.src ?? ''),
	transformTags: {
		h1: 'h2',
		a: (tagName, attribs) => {
			const external = /^https?:/i.test(attribs.href ?? '');
			return {
				tagName,
				attribs: external
					? { ...attribs, rel: 'noopener noreferrer nofollow', target: '_blank' }
					: { href: attribs.href ?? '', ...(attribs.title ? { title: attribs.title } : {}) }
			};
		},
		img: (tagName, attribs) => ({ tagName, attribs: { ...attribs, loading: 'lazy' } })
	}
};

/** Cleans HTML to the story policy. */
export function sanitizeStoryHtml(html: string): string {
	return sanitizeHtml(html, STORY_HTML_POLICY);
}

/** Markdown → HTML → cleaned HTML. Run on the server at every save and for the live preview. */
export function renderMarkdown(markdown: string): string {
	return sanitizeStoryHtml(marked.parse(markdown) as string);
}
