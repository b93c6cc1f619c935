import { appOrigin } from './config';
import { listPublicPatients } from './patients';
import { listPublishedStories } from './stories';

interface SitemapEntry {
	path: string;
	lastmod?: Date;
}

const escapeXml = (text: string) =>
	text
		.replace(/&/g, '&amp;')
		.replace(/</g, '&lt;')
		.replace(/>/g, '&gt;')
		.replace(/"/g, '&quot;')
		.replace(/'/g, '&apos;');

/** Every public page worth indexing (sitemaps.org protocol 0.9). Hidden patients never appear. */
export async function sitemapEntries(): Promise<SitemapEntry[]> {
	const [patients, stories] = await Promise.all([listPublicPatients(), listPublishedStories()]);
	return [
		{ path: '/' },
		{ path: '/patients' },
		...patients.map((p) => ({ path: `/patients/${p.slug}` })),
		{ path: '/stories', lastmod: stories[0]?.publishedAt },
		...stories.map((s) => ({ path: `/stories/${s.slug}`, lastmod: s.updatedAt })),
		{ path: '/stranded' }
	];
}

export function sitemapXml(entries: SitemapEntry[], origin: string = appOrigin()): string {
	const urls = entries.map((entry) => {
		const lastmod = entry.lastmod ? `<lastmod>${entry.lastmod.toISOString()}</lastmod>` : '';
		return `<url><loc>${escapeXml(origin + entry.path)}</loc>${lastmod}</url>`;
	});
	return [
		'<?xml version="1.0" encoding="UTF-8"?>',
		'<urlset xmlns="http://www.sitemaps.org/schemas/sitemap/0.9">',
		...urls,
		'</urlset>',
		''
	].join('\n');
}
