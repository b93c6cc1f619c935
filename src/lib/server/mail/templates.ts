import { eq } from 'drizzle-orm';
import { readFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { appOrigin } from '../config';
import type { Executor } from '../db';
import { organisationSettings } from '../db/schema';

/**
 * E-mail templates live in `emails/`: `<name>.mjml` (HTML; its `<mj-title>` is the subject)
 * beside a hand-written `<name>.txt` (plain text). Both take `{{placeholders}}`; every template
 * also gets the shared header and footer, which need the variables in `CommonVars`.
 */
export const TEMPLATE_VARIABLES = {
	'sign-in-link': ['name', 'link', 'minutes'],
	'password-reset': ['name', 'link', 'minutes'],
	'staff-invite': ['name', 'inviterName', 'link', 'days'],
	'test-message': ['name', 'sentAt'],
	'gift-receipt': [
		'name',
		'email',
		'patientName',
		'levelName',
		'amount',
		'giftDate',
		'intro',
		'receiptNumber',
		'receiptText',
		'accountLink'
	],
	'monthly-gift-failed': ['name', 'patientName', 'amount', 'reason', 'link'],
	receipt: ['name', 'email', 'amount', 'receiptNumber', 'receiptText', 'accountLink'],
	'year-end-statement': ['name', 'year', 'statementText', 'accountLink'],
	'gift-notice': [
		'recipientName',
		'giverName',
		'patientName',
		'giftMessage',
		'claimLink',
		'patientLink'
	],
	'homecoming-update': [
		'name',
		'patientName',
		'releaseDate',
		'releaseArea',
		'releaseStory',
		'photoUrl',
		'photoAlt',
		'patientLink',
		'reason',
		'unsubscribeLink',
		'preferencesLink'
	],
	'waypoint-update': [
		'name',
		'patientName',
		'distance',
		'daysSinceRelease',
		'asOf',
		'mapUrl',
		'mapAlt',
		'journeyLink',
		'reason',
		'unsubscribeLink',
		'preferencesLink'
	],
	'field-note': [
		'name',
		'patientName',
		'storyTitle',
		'storyExcerpt',
		'storyLink',
		'reason',
		'unsubscribeLink',
		'preferencesLink'
	],
	'last-signal': [
		'name',
		'patientName',
		'farewell',
		'journeyLink',
		'reason',
		'unsubscribeLink',
		'preferencesLink'
	]
} as const;

export type TemplateName = keyof typeof TEMPLATE_VARIABLES;
export const TEMPLATE_NAMES = Object.keys(TEMPLATE_VARIABLES) as TemplateName[];

export interface CommonVars {
	orgName: string;
	/** Postal address; line breaks are kept (as `<br>` in HTML). */
	orgAddress: string;
	/** Where the header links to. */
	siteUrl: string;
}

export type TemplateVars<N extends TemplateName> = CommonVars &
	Record<(typeof TEMPLATE_VARIABLES)[N][number], string | number>;

export interface RenderedEmail {
	subject: string;
	html: string;
	text: string;
}

export function emailsDir(): string {
	return resolve(process.env.EMAILS_DIR ?? 'emails');
}

interface Compiled {
	subject: string;
	html: string;
	text: string;
}

const cache = new Map<TemplateName, Promise<Compiled>>();

async function compile(name: TemplateName): Promise<Compiled> {
	const dir = emailsDir();
	const file = join(dir, `${name}.mjml`);
	const [source, text, footer, { default: mjml2html }] = await Promise.all([
		readFile(file, 'utf8'),
		readFile(join(dir, `${name}.txt`), 'utf8'),
		readFile(join(dir, 'partials', 'footer.txt'), 'utf8'),
		import('mjml')
	]);
	const subject = /<mj-title\s*>([\s\S]*?)<\/mj-title\s*>/.exec(source)?.[1];
	if (!subject) throw new Error(`E-mail template ${name} has no <mj-title> (its subject).`);
	const result = await mjml2html(source, {
		filePath: file,
		ignoreIncludes: false,
		includePath: dir,
		validationLevel: 'strict',
		// No web fonts: nothing in our mail should make the reader's client call a third party.
		fonts: {},
		keepComments: false
	});
	return {
		subject: subject.replace(/\s+/g, ' ').trim(),
		html: result.html,
		text: `${text.trimEnd()}\n\n${footer.trimEnd()}\n`
	};
}

/** Compiles a template once per process; later renders only fill in the placeholders. */
function compiled(name: TemplateName): Promise<Compiled> {
	let pending = cache.get(name);
	if (!pending) {
		pending = compile(name);
		cache.set(name, pending);
		pending.catch(() => cache.delete(name));
	}
	return pending;
}

const HTML_ESCAPES: Record<string, string> = {
	'&': '&amp;',
	'<': '&lt;',
	'>': '&gt;',
	'"': '&quot;',
	"'": '&#39;'
};

export function escapeHtml(value: string): string {
	return value.replace(/[&<>"']/g, (c) => HTML_ESCAPES[c]);
}

function fill(
	template: string,
	vars: Record<string, string | number>,
	name: string,
	encode: (value: string) => string
): string {
	return template.replace(/\{\{\s*([A-Za-z][A-Za-z0-9]*)\s*\}\}/g, (_, key: string) => {
		const value = vars[key];
		if (value === undefined || value === null) {
			throw new Error(`E-mail template ${name} needs a value for {{${key}}}.`);
		}
		return encode(String(value));
	});
}

export async function renderEmail<N extends TemplateName>(
	name: N,
	vars: TemplateVars<N>
): Promise<RenderedEmail> {
	const template = await compiled(name);
	const values = vars as Record<string, string | number>;
	return {
		subject: fill(template.subject, values, name, (v) => v.replace(/\s+/g, ' ').trim()),
		html: fill(template.html, values, name, (v) => escapeHtml(v).replace(/\r?\n/g, '<br />')),
		text: fill(template.text, values, name, (v) => v)
	};
}

/** The footer and header variables, from the organisation settings. */
export async function organisationVars(executor: Executor): Promise<CommonVars> {
	const [settings] = await executor
		.select({
			displayName: organisationSettings.displayName,
			postalAddress: organisationSettings.postalAddress
		})
		.from(organisationSettings)
		.where(eq(organisationSettings.id, 1));
	return {
		orgName: settings?.displayName ?? 'Tideward',
		orgAddress: settings?.postalAddress ?? '',
		siteUrl: appOrigin()
	};
}
