import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import { patients, stories, storyPatients } from '$lib/server/db/schema';
import { CARD_HEIGHT, CARD_WIDTH, shareCardSvg } from '$lib/server/og/card';
import { GET as patientCard } from '../../src/routes/og/patients/[slug].png/+server';
import { GET as storiesCard } from '../../src/routes/og/stories.png/+server';
import { GET as storyCard } from '../../src/routes/og/stories/[slug].png/+server';
import { useTestDatabase } from '../setup/test-db';
import { loadStatus, publicEvent } from './public-event';

const db = useTestDatabase();

beforeAll(async () => {
	const base = {
		species: 'kemps_ridley',
		lifeStage: 'juvenile',
		admittedOn: '2026-02-01',
		admissionReason: 'fishing_hook_or_line',
		status: 'in_rehabilitation'
	} as const;
	await db()
		.insert(patients)
		.values([
			{ id: 'p1', slug: 'timon', name: 'Timón', ...base, microchip: '999000000000001' },
			{ id: 'p2', slug: 'oculto', name: 'Oculto', ...base, publicTreatment: 'hidden' },
			{
				id: 'p3',
				slug: 'recuerdo',
				name: 'Recuerdo',
				...base,
				status: 'died',
				publicTreatment: 'memorial'
			}
		]);
	await db()
		.insert(stories)
		.values({
			id: 's1',
			slug: 'a-very-long-story',
			title:
				'A very long story title that goes on well past what one or two lines of a share card can hold, so that it must be shortened',
			kind: 'release',
			status: 'published',
			publishedAt: new Date('2026-03-01T09:00:00Z')
		});
	await db().insert(storyPatients).values({ storyId: 's1', patientId: 'p1' });
});

async function png(response: Response) {
	expect(response.status).toBe(200);
	expect(response.headers.get('content-type')).toBe('image/png');
	const bytes = Buffer.from(await response.arrayBuffer());
	expect(bytes.subarray(0, 8)).toEqual(Buffer.from([137, 80, 78, 71, 13, 10, 26, 10]));
	return { bytes, meta: await sharp(bytes).metadata(), stats: await sharp(bytes).stats() };
}

describe('share images', () => {
	it('draws a 1200 × 630 PNG for a patient, with real text drawn', async () => {
		const { meta, stats } = await png(
			(await patientCard(publicEvent('/og/patients/timon.png', { slug: 'timon' }))) as Response
		);
		expect([meta.width, meta.height]).toEqual([CARD_WIDTH, CARD_HEIGHT]);
		expect(meta.format).toBe('png');
		// White title letters on the dark background: the brightest pixels are near white.
		expect(stats.channels[0].max).toBeGreaterThan(240);
	});

	it('draws cards for a story and for the stories page', async () => {
		for (const response of [
			await storyCard(publicEvent('/og/stories/x.png', { slug: 'a-very-long-story' })),
			await storiesCard(publicEvent('/og/stories.png'))
		]) {
			const { meta } = await png(response as Response);
			expect([meta.width, meta.height]).toEqual([CARD_WIDTH, CARD_HEIGHT]);
		}
	});

	it('answers 304 to its own ETag without drawing again', async () => {
		const first = (await patientCard(
			publicEvent('/og/patients/timon.png', { slug: 'timon' })
		)) as Response;
		const etag = first.headers.get('etag')!;
		expect(etag).toMatch(/^"[\w-]+"$/);
		const again = (await patientCard(
			publicEvent('/og/patients/timon.png', { slug: 'timon' }, { 'if-none-match': etag })
		)) as Response;
		expect(again.status).toBe(304);
		expect(again.headers.get('etag')).toBe(etag);
	});

	it('has no card for a hidden or unknown patient', async () => {
		for (const slug of ['oculto', 'nobody']) {
			expect(
				await loadStatus(() => patientCard(publicEvent(`/og/patients/${slug}.png`, { slug })))
			).toBe(404);
		}
	});

	it('writes letters as paths so that no system font is needed', () => {
		const svg = shareCardSvg({
			eyebrow: 'In rehabilitation',
			title: 'Timón',
			subtitle: "Kemp's ridley · Lepidochelys kempii",
			memorial: false,
			organisation: 'Example Hospital'
		});
		expect(svg).not.toMatch(/<text|font-family|@font-face/);
		expect(svg.match(/<path d="M/g)?.length).toBeGreaterThanOrEqual(4);
	});

	it('draws the same PNG where fontconfig finds no font at all', async () => {
		const svg = shareCardSvg({
			eyebrow: 'Release',
			title: 'Gota goes home',
			subtitle: 'Leatherback · Dermochelys coriacea',
			memorial: false,
			organisation: 'Tideward'
		});
		const here = await sharp(Buffer.from(svg)).png().toBuffer();
		const dir = mkdtempSync(join(tmpdir(), 'no-fonts-'));
		const config = join(dir, 'fonts.conf');
		writeFileSync(
			config,
			`<?xml version="1.0"?><fontconfig><cachedir>${dir}</cachedir></fontconfig>`
		);
		const child = spawnSync(
			process.execPath,
			[
				'--input-type=module',
				'-e',
				"import sharp from 'sharp'; let s = ''; for await (const c of process.stdin) s += c; process.stdout.write(await sharp(Buffer.from(s)).png().toBuffer());"
			],
			{ input: svg, env: { ...process.env, FONTCONFIG_FILE: config }, maxBuffer: 1 << 24 }
		);
		expect(child.status, child.stderr.toString()).toBe(0);
		expect(Buffer.compare(child.stdout, here)).toBe(0);
	});
});
