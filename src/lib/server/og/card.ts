import merriweatherLatin from '@fontsource/merriweather/files/merriweather-latin-700-normal.woff?inline';
import merriweatherLatinExt from '@fontsource/merriweather/files/merriweather-latin-ext-700-normal.woff?inline';
import sourceSansLatin from '@fontsource/source-sans-3/files/source-sans-3-latin-600-normal.woff?inline';
import sourceSansLatinExt from '@fontsource/source-sans-3/files/source-sans-3-latin-ext-600-normal.woff?inline';
import { error } from '@sveltejs/kit';
import sharp from 'sharp';
import { SPECIES_LABELS, speciesInText, STATUS_LABELS } from '$lib/patients';
import { formatPublished, STORY_KIND_LABELS } from '$lib/stories';
import { ifNoneMatchMatches, notModified, strongEtag, withEtag } from '../http';
import { getPublicPatient } from '../patients';
import { getOrganisationSettings } from '../settings';
import { getPublishedStory } from '../stories';
import { loadWoff, measureText, textPath, wrapText, type FontStack } from './font';

// Share images (Open Graph / Twitter cards): 1200 × 630 PNG drawn from an SVG of our own. The
// fonts are bundled into the server build (Vite `?inline`) because @fontsource is a development
// dependency and a production install has no node_modules copy of it.

export const CARD_WIDTH = 1200;
export const CARD_HEIGHT = 630;
/** Changes whenever the drawing changes, so that old ETags stop matching. */
const CARD_VERSION = 'card-1';

/** Everything a card says; built only from public fields. */
export interface ShareCard {
	eyebrow: string;
	title: string;
	subtitle: string;
	/** Quieter colours for a patient remembered after dying in our care. */
	memorial: boolean;
	/** The organisation's public display name. */
	organisation: string;
}

const PALETTE = {
	deep950: '#071c25',
	deep900: '#0c2b37',
	deep800: '#103a4a',
	deep700: '#13485b',
	deep200: '#a9d0dc',
	lagoon300: '#6fd1bf',
	lagoon200: '#a5e6d8',
	sand100: '#f5eedd',
	sand300: '#dcc48e',
	coral300: '#f2aa9b',
	coral400: '#e97c66',
	ink900: '#14232b',
	ink700: '#2f3d44'
};

interface Fonts {
	heading: FontStack;
	body: FontStack;
}

let fonts: Fonts | undefined;

function fromDataUrl(url: string): Uint8Array {
	return Buffer.from(url.slice(url.indexOf(',') + 1), 'base64');
}

/** Parsed once per process; font files never change while it runs. */
function loadFonts(): Fonts {
	fonts ??= {
		heading: [merriweatherLatin, merriweatherLatinExt].map((f) => loadWoff(fromDataUrl(f))),
		body: [sourceSansLatin, sourceSansLatinExt].map((f) => loadWoff(fromDataUrl(f)))
	};
	return fonts;
}

/** The Tideward mark (src/lib/components/Mark.svelte) at `size` pixels. */
function mark(x: number, y: number, size: number, memorial: boolean): string {
	const s = size / 32;
	return `<g transform="translate(${x} ${y}) scale(${s})">
<rect width="32" height="32" rx="7" fill="${PALETTE.deep800}" stroke="${PALETTE.deep700}" stroke-width="0.6"/>
<g fill="none" stroke-linecap="round" stroke-linejoin="round">
<path d="M5 21.5C5 13.5 10.5 7.5 17 7.5c5.2 0 9 3.6 9 8.2 0 3.3-2.5 5.3-5.2 5.3-2.3 0-4-1.6-4-3.7 0-1.7 1.3-3 3-3" stroke="${PALETTE.sand100}" stroke-width="2.6"/>
<path d="M9.5 21.5c0-4.6 3-8.3 7-8.6" stroke="${PALETTE.lagoon300}" stroke-width="2.2"/>
<path d="M4.5 25.5c2.3 0 2.3-1.6 4.6-1.6s2.3 1.6 4.6 1.6 2.3-1.6 4.6-1.6 2.3 1.6 4.6 1.6 2.3-1.6 4.6-1.6" stroke="${memorial ? PALETTE.sand300 : PALETTE.coral400}" stroke-width="2"/>
</g></g>`;
}

/** The title at the largest size that fits in three lines (two at the largest size). */
function titleLayout(heading: FontStack, title: string, maxWidth: number) {
	const sizes = [
		{ size: 76, lines: 2 },
		{ size: 64, lines: 3 },
		{ size: 54, lines: 3 }
	];
	for (const { size, lines } of sizes) {
		const wrapped = wrapText(heading, title, size, maxWidth, lines);
		if (!wrapped.at(-1)?.endsWith('…') || size === 54) return { size, lines: wrapped };
	}
	throw new Error('unreachable');
}

/** The card as SVG; every letter is a path, so no system font is ever looked up. */
export function shareCardSvg(card: ShareCard): string {
	const { heading, body } = loadFonts();
	const left = 80;
	const maxWidth = CARD_WIDTH - left * 2;
	const background = card.memorial ? PALETTE.ink900 : PALETTE.deep900;
	const accent = card.memorial ? PALETTE.sand300 : PALETTE.coral300;
	const wave = card.memorial ? PALETTE.ink700 : PALETTE.deep800;

	const brandSize = 40;
	const brand = textPath(heading, 'Tideward', left + 96, 104, brandSize);
	const organisation =
		card.organisation && card.organisation !== 'Tideward'
			? textPath(
					body,
					wrapText(body, card.organisation, 26, maxWidth - 96, 1)[0] ?? '',
					left + 96,
					140,
					26
				)
			: '';

	const eyebrowSize = 30;
	const eyebrow = textPath(
		body,
		wrapText(body, card.eyebrow.toUpperCase(), eyebrowSize, maxWidth, 1)[0] ?? '',
		left,
		250,
		eyebrowSize
	);

	const title = titleLayout(heading, card.title, maxWidth);
	const lineHeight = Math.round(title.size * 1.2);
	const titleTop = 250 + 28 + title.size;
	const titlePaths = title.lines
		.map((line, i) => textPath(heading, line, left, titleTop + i * lineHeight, title.size))
		.join('');
	const subtitleSize = 34;
	const subtitleY = titleTop + (title.lines.length - 1) * lineHeight + 64;
	const subtitle = wrapText(body, card.subtitle, subtitleSize, maxWidth, 1)[0] ?? '';
	const subtitlePath = textPath(body, subtitle, left, subtitleY, subtitleSize);
	const accentWidth = Math.min(maxWidth, measureText(body, 'TIDEWARD', eyebrowSize));

	return `<svg xmlns="http://www.w3.org/2000/svg" width="${CARD_WIDTH}" height="${CARD_HEIGHT}" viewBox="0 0 ${CARD_WIDTH} ${CARD_HEIGHT}">
<rect width="${CARD_WIDTH}" height="${CARD_HEIGHT}" fill="${background}"/>
<path d="M0 560 C 150 520 300 600 450 560 S 750 520 900 560 S 1100 600 1200 560 L1200 630 L0 630 Z" fill="${wave}"/>
<path d="M0 590 C 150 560 300 620 450 590 S 750 560 900 590 S 1100 620 1200 590" fill="none" stroke="${accent}" stroke-opacity="0.55" stroke-width="4"/>
${mark(left, 56, 80, card.memorial)}
<path d="${brand}" fill="${PALETTE.sand100}"/>
${organisation ? `<path d="${organisation}" fill="${PALETTE.deep200}"/>` : ''}
<rect x="${left}" y="196" width="${Math.round(accentWidth)}" height="5" rx="2.5" fill="${accent}"/>
<path d="${eyebrow}" fill="${accent}"/>
<path d="${titlePaths}" fill="#ffffff"/>
<path d="${subtitlePath}" fill="${card.memorial ? PALETTE.sand100 : PALETTE.lagoon200}"/>
</svg>`;
}

export async function renderShareCard(svg: string): Promise<Buffer> {
	return sharp(Buffer.from(svg)).png({ compressionLevel: 9 }).toBuffer();
}

/** A strong tag for the PNG, known before drawing it (same SVG + same renderer = same bytes). */
export function shareCardEtag(svg: string): string {
	return strongEtag(`${CARD_VERSION}\n${sharp.versions.vips}\n${svg}`);
}

async function organisationName(): Promise<string> {
	return (await getOrganisationSettings()).displayName;
}

/** A patient's card: name, species and status. Null for hidden or unknown patients. */
export async function patientShareCard(slug: string): Promise<ShareCard | null> {
	const patient = await getPublicPatient(slug);
	if (!patient) return null;
	const memorial = patient.publicTreatment === 'memorial';
	const species = SPECIES_LABELS[patient.species];
	return {
		eyebrow: memorial ? 'In memory' : STATUS_LABELS[patient.status],
		title: patient.name,
		subtitle: `${species.common} · ${species.scientific}`,
		memorial,
		organisation: await organisationName()
	};
}

/** A story's card: kind, date, title and the patients it is about. Null unless published. */
export async function storyShareCard(slug: string): Promise<ShareCard | null> {
	const story = await getPublishedStory(slug);
	if (!story) return null;
	const names = story.patients.map((p) => `${p.name} (${speciesInText(p.species)})`);
	return {
		eyebrow: `${STORY_KIND_LABELS[story.kind]} · ${formatPublished(story.publishedAt)}`,
		title: story.title,
		subtitle: names.length > 0 ? `With ${names.join(', ')}` : 'News from the hospital',
		memorial: false,
		organisation: await organisationName()
	};
}

/** The stories page's card. */
export async function storiesShareCard(): Promise<ShareCard> {
	return {
		eyebrow: 'Stories',
		title: 'Stories from the hospital',
		subtitle: 'Admissions, recoveries, releases and journeys',
		memorial: false,
		organisation: await organisationName()
	};
}

/** The PNG answer for a card, with its ETag; 304 without drawing when the client has it. */
export async function shareCardResponse(
	request: Request,
	card: ShareCard | null
): Promise<Response> {
	if (!card) error(404, 'Not found.');
	const svg = shareCardSvg(card);
	const etag = shareCardEtag(svg);
	const headers = { 'content-type': 'image/png' };
	if (ifNoneMatchMatches(request, etag)) return notModified(etag, headers);
	const png = await renderShareCard(svg);
	return withEtag(request, new Uint8Array(png), { etag, headers });
}
