// Hostile uploads: position files for the Tracking desk (CSV, GeoJSON, GPX; the import and the
// preview endpoints) and photos for the Newsroom. Huge lines and column counts are streamed, not
// written to disk; the decompression bomb is a real one (a PNG whose pixels inflate to 312 MB).
import { eq } from 'drizzle-orm';
import { crc32, deflateSync } from 'node:zlib';
import sharp from 'sharp';
import { beforeAll, describe, expect, it } from 'vitest';
import type { SessionUser } from '$lib/server/auth/lucia';
import { media, patients, positionImports } from '$lib/server/db/schema';
import { POST as uploadPhoto } from '../../../src/routes/staff/newsroom/media/+server';
import { POST as importPositions } from '../../../src/routes/staff/tracking/[slug]/import/+server';
import { POST as previewCsv } from '../../../src/routes/staff/tracking/[slug]/preview/+server';
import { useTestDatabase } from '../../setup/test-db';
import { fakeEvent, people } from '../newsroom-helpers';
import {
	CaseCounter,
	expectCountsTrue,
	expectHealthy,
	hostileCase,
	trackRowCounts,
	type Outcome
} from './harness';
import { OVERSIZED, PATH_TRAVERSAL, SOME_TEXT, UNICODE, XSS, type Payload } from './payloads';

process.env.MAIL_WORKER = 'off';
const db = useTestDatabase();
const person = people(db);
const counter = new CaseCounter();
const SLUG = 'hostile-uploads';
const MB = 1024 * 1024;
let tracker: SessionUser;
let educator: SessionUser;

beforeAll(async () => {
	[tracker, educator] = await Promise.all([person(['tracker']), person(['educator'])]);
	await db().insert(patients).values({
		id: crypto.randomUUID(),
		slug: SLUG,
		name: 'Uploads',
		species: 'loggerhead',
		lifeStage: 'adult',
		admittedOn: '2026-01-01',
		admissionReason: 'boat_strike',
		status: 'released',
		transmitterId: 'TX-UP'
	});
	await trackRowCounts(db());
});

// ── bodies ────────────────────────────────────────────────────────────────────────────────────

type Body = Uint8Array | string | (() => ReadableStream<Uint8Array>);

/** A body made on demand in 1 MB chunks: `total` bytes of `fill` between `head` and `tail`. */
function generated(
	head: string,
	fill: string,
	total: number,
	tail = ''
): () => ReadableStream<Uint8Array> {
	return () => {
		const encoder = new TextEncoder();
		const chunk = encoder.encode(fill.repeat(Math.ceil(MB / fill.length)).slice(0, MB));
		let sent = 0;
		let stage: 'head' | 'fill' | 'tail' | 'done' = 'head';
		return new ReadableStream<Uint8Array>({
			pull(controller) {
				if (stage === 'head') {
					controller.enqueue(encoder.encode(head));
					stage = 'fill';
				} else if (stage === 'fill') {
					const size = Math.min(chunk.length, total - sent);
					controller.enqueue(chunk.subarray(0, size));
					sent += size;
					if (sent >= total) stage = 'tail';
				} else if (stage === 'tail') {
					if (tail) controller.enqueue(encoder.encode(tail));
					stage = 'done';
				} else controller.close();
			}
		});
	};
}

const HEADER = 'timestamp,latitude,longitude,lc\n';
const GOOD_ROW = '2026-03-02T12:00:00Z,30.00000,-70.00000,G\n';
const MAPPING = JSON.stringify({ time: 'timestamp', lat: 'latitude', lon: 'longitude', lc: 'lc' });

/**
 * A real decompression bomb: a PNG of 50,000 × 50,000 one-bit pixels (2.5 gigapixels), whose
 * 312 MB of zero rows deflate to a few hundred kilobytes.
 */
function pngBomb(): Buffer {
	const side = 50_000;
	// each row: filter byte 0, then side / 8 bytes of black pixels
	const idat = deflateSync(Buffer.alloc((1 + side / 8) * side), { level: 9 });
	const chunk = (type: string, data: Buffer) => {
		const body = Buffer.concat([Buffer.from(type, 'latin1'), data]);
		const length = Buffer.alloc(4);
		length.writeUInt32BE(data.length);
		const crc = Buffer.alloc(4);
		crc.writeUInt32BE(crc32(body));
		return Buffer.concat([length, body, crc]);
	};
	const ihdr = Buffer.alloc(13);
	ihdr.writeUInt32BE(side, 0);
	ihdr.writeUInt32BE(side, 4);
	ihdr[8] = 1; // bit depth
	ihdr[9] = 0; // greyscale
	return Buffer.concat([
		Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]),
		chunk('IHDR', ihdr),
		chunk('IDAT', idat),
		chunk('IEND', Buffer.alloc(0))
	]);
}

// ── the Tracking desk ─────────────────────────────────────────────────────────────────────────

interface ImportCase {
	id: string;
	body: Body;
	query?: Record<string, string>;
	headers?: Record<string, string>;
	/** the file is good: it must be stored, with this file name */
	storedAs?: string;
	/** what the refusal must say */
	message?: RegExp;
}

function importEvent(c: ImportCase) {
	const query = new URLSearchParams({
		format: 'csv',
		policy: 'refuse_file',
		fileName: 'track.csv',
		transmitterId: 'TX-UP',
		mapping: MAPPING,
		...c.query
	});
	const path = `/staff/tracking/${SLUG}/import?${query}`;
	const event = fakeEvent(path, tracker, {}, { slug: SLUG }, 'GET') as unknown as { url: URL };
	const body = typeof c.body === 'function' ? c.body() : c.body;
	return {
		...event,
		request: new Request(event.url, {
			method: 'POST',
			body,
			headers: { origin: 'http://localhost', ...c.headers },
			duplex: 'half'
		} as RequestInit)
	} as never;
}

async function storedFileName(outcome: Outcome): Promise<string | undefined> {
	const report = outcome.kind === 'saved' ? await outcome.response!.json() : null;
	const [row] = await db()
		.select({ fileName: positionImports.fileName })
		.from(positionImports)
		.where(eq(positionImports.id, report?.importId ?? ''));
	return row?.fileName;
}

/** File names: stored as a label only, reduced to their last part without control characters. */
const fileNames: Payload[] = [
	...PATH_TRAVERSAL,
	UNICODE[0],
	UNICODE[7],
	UNICODE[12],
	XSS[0],
	OVERSIZED[0]
];

/**
 * What the app keeps of an uploaded file's name (src/lib/server/file-names.ts): its last path
 * part, without control or bidirectional-override characters, at most 200 characters.
 */
function keptName(name: string): string {
	return (
		name
			.split(/[\\/]/)
			.pop()!
			// eslint-disable-next-line no-control-regex
			.replace(/[\u0000-\u001f\u007f\u200e\u200f\u202a-\u202e\u2066-\u2069]/g, '')
			.trim()
			.slice(0, 200)
	);
}

const importCases: ImportCase[] = [
	// a good file under a hostile name is a safe save; every hostile query value is refused
	...fileNames.map((p, i) => ({
		id: `file name: ${p.id}`,
		body: HEADER + GOOD_ROW.replace('12:00', `12:${String(i).padStart(2, '0')}`),
		query: { fileName: p.value },
		storedAs: p.value.length > 255 || keptName(p.value) === '' ? undefined : keptName(p.value)
	})),
	...[...SOME_TEXT, UNICODE[1]].map((p) => ({
		id: `transmitter: ${p.id}`,
		body: HEADER + GOOD_ROW,
		query: { transmitterId: p.value }
	})),
	...['xlsx', '', 'CSV ', '../csv', 'csv\u0000'].map((format) => ({
		id: `format ${JSON.stringify(format)}`,
		body: HEADER + GOOD_ROW,
		query: { format }
	})),
	...['keep_everything', '', 'refuse_file\u0000'].map((policy) => ({
		id: `policy ${JSON.stringify(policy)}`,
		body: HEADER + GOOD_ROW,
		query: { policy }
	})),
	...['Q', 'g\u0000', '<script>'].map((defaultClass) => ({
		id: `default class ${JSON.stringify(defaultClass)}`,
		body: HEADER + GOOD_ROW,
		query: { defaultClass }
	})),
	...[
		['not JSON', '{'],
		['null', 'null'],
		['an array', '[]'],
		['a string', '"timestamp"'],
		['numbers', '{"time":1,"lat":2,"lon":3}'],
		['objects', '{"time":{"toString":"x"},"lat":"latitude","lon":"longitude"}'],
		['prototype keys', '{"__proto__":{"time":"timestamp"},"lat":"latitude","lon":"longitude"}'],
		['unknown columns', '{"time":"../../etc/passwd","lat":"latitude","lon":"longitude","lc":"lc"}'],
		['NUL column', '{"time":"time\\u0000","lat":"latitude","lon":"longitude","lc":"lc"}'],
		['deep nesting', '['.repeat(100_000)],
		[
			'1 MB column name',
			JSON.stringify({ time: 'x'.repeat(MB), lat: 'latitude', lon: 'longitude' })
		]
	].map(([id, mapping]) => ({ id: `mapping: ${id}`, body: HEADER + GOOD_ROW, query: { mapping } })),
	{
		id: 'declared length over the limit',
		body: HEADER + GOOD_ROW,
		headers: { 'content-length': String(200 * MB) }
	},
	{
		// whitespace, so that the reader gets through 64 MB quickly
		id: 'a chunked body over 64 MB',
		body: generated('<gpx>', ' ', 65 * MB, '</gpx>'),
		query: { format: 'gpx', fileName: 'track.gpx' }
	},
	{
		id: 'a body cut off by the client',
		body: () =>
			new ReadableStream<Uint8Array>({
				start(controller) {
					controller.enqueue(new TextEncoder().encode(HEADER + GOOD_ROW));
					controller.error(new Error('connection reset'));
				}
			})
	},
	{ id: 'empty body', body: '' },
	// a file with no rows is recorded as an import of nothing
	{ id: 'header only', body: HEADER, storedAs: 'track.csv' },
	{ id: 'blank lines only', body: '\n\n\r\n   \n' },
	{
		id: 'a header of 1,000,000 columns',
		body: generated('', 'c,', 2_000_000, '\n' + GOOD_ROW),
		message: /^The header row has more than [\d,]+ columns; a position file has at most 200\.$/
	},
	{
		id: 'a row of 1,000,000 short columns',
		body: generated(HEADER, '1,', 2_000_000, '\n' + GOOD_ROW),
		message: /^Line 2 is longer than 128,000 characters/
	},
	{
		id: 'a row of 1,000,000 empty columns',
		body: generated(HEADER + '2026-03-02T12:00:00Z,30,-70,G', ',', 1_000_000, '\n'),
		message: /^Line 2 has 1,000,004 columns; a position file has at most 200\.$/
	},
	{
		id: 'one 200 MB line after the header',
		body: generated(HEADER, 'x', 200 * MB, '\n'),
		message: /^Line 2 is longer than 128,000 characters/
	},
	{
		id: 'a 200 MB first line',
		body: generated('', 'x', 200 * MB),
		message: /^The first line is longer than 128 000 bytes/
	},
	{
		id: 'a quoted cell never closed (20 MB)',
		body: generated(HEADER + '"', 'y', 20 * MB)
	},
	{ id: 'a PNG named .csv', body: new Uint8Array(0), query: { fileName: 'track.csv' } },
	{
		id: 'an HTML page named .csv',
		body: '<!doctype html><html><script>alert(1)</script></html>\n'
	},
	{ id: 'binary with NUL bytes', body: new Uint8Array([0, 1, 2, 0xff, 0xfe, 0, 10, 13, 0]) },
	// csv-parse reads the UTF-16 byte order mark and decodes the file: a good file
	{
		id: 'UTF-16 text',
		body: new Uint8Array(
			Buffer.from('\uFEFF' + HEADER + GOOD_ROW.replace('12:00', '13:00'), 'utf16le')
		),
		storedAs: 'track.csv'
	},
	{ id: 'NUL inside cells', body: HEADER + '2026-03-02T12:00:00Z\u0000,30\u0000,-70,G\n' },
	{
		id: 'formulas and markup in cells',
		body: HEADER + '=cmd|calc!A0,+30,-70,@G\n<script>alert(1)</script>,30,-70,G\n'
	},
	{ id: 'numbers beyond range', body: HEADER + '2026-03-02T12:00:00Z,1e309,-1e309,G\n' },
	{ id: 'a time in year 275760', body: HEADER + '+275760-09-13T00:00:00Z,30,-70,G\n' },
	// GeoJSON
	...[
		['not JSON', '{"type":'],
		['deeply nested arrays', '['.repeat(1_000_000)],
		['deeply nested objects', '{"a":'.repeat(200_000)],
		[
			'a number too big',
			'{"type":"FeatureCollection","features":[{"type":"Feature","geometry":{"type":"Point","coordinates":[1e400,-1e400]},"properties":{"time":"2026-03-02T12:00:00Z"}}]}'
		],
		[
			'prototype pollution',
			'{"type":"FeatureCollection","__proto__":{"x":1},"features":[{"type":"Feature","geometry":{"type":"Point","coordinates":[-70,30]},"properties":{"__proto__":{"time":"2026-03-02T12:00:00Z"},"constructor":{"prototype":{"x":1}}}}]}'
		],
		[
			'markup properties',
			'{"type":"FeatureCollection","features":[{"type":"Feature","geometry":{"type":"Point","coordinates":[-70,30]},"properties":{"time":"<script>alert(1)</script>","lc":"=1+1"}}]}'
		]
	].map(([id, body]) => ({
		id: `GeoJSON ${id}`,
		body,
		query: { format: 'geojson', fileName: 'track.geojson' }
	})),
	{
		id: 'GeoJSON with a 200 MB string',
		body: generated(
			'{"type":"FeatureCollection","features":[{"type":"Feature","properties":{"note":"',
			'z',
			200 * MB,
			'"}}]}'
		),
		query: { format: 'geojson', fileName: 'track.geojson' }
	},
	// GPX
	...[
		[
			'billion laughs',
			'<?xml version="1.0"?><!DOCTYPE gpx [<!ENTITY a "aaaaaaaaaa"><!ENTITY b "&a;&a;&a;&a;&a;&a;&a;&a;&a;&a;"><!ENTITY c "&b;&b;&b;&b;&b;&b;&b;&b;&b;&b;"><!ENTITY d "&c;&c;&c;&c;&c;&c;&c;&c;&c;&c;"><!ENTITY e "&d;&d;&d;&d;&d;&d;&d;&d;&d;&d;"><!ENTITY f "&e;&e;&e;&e;&e;&e;&e;&e;&e;&e;"><!ENTITY g "&f;&f;&f;&f;&f;&f;&f;&f;&f;&f;">]><gpx><wpt lat="30" lon="-70"><time>&g;</time></wpt></gpx>'
		],
		[
			'external entity',
			'<?xml version="1.0"?><!DOCTYPE gpx [<!ENTITY xxe SYSTEM "file:///etc/passwd">]><gpx><wpt lat="30" lon="-70"><name>&xxe;</name><time>2026-03-02T12:00:00Z</time></wpt></gpx>'
		],
		['deep nesting', '<gpx>' + '<extensions>'.repeat(100_000)],
		['unclosed', '<gpx><wpt lat="30" lon="-70"><time>2026-03-02'],
		['markup in values', '<gpx><wpt lat="&lt;script&gt;" lon="-70"><time>=1+1</time></wpt></gpx>']
	].map(([id, body]) => ({
		id: `GPX ${id}`,
		body,
		query: { format: 'gpx', fileName: 'track.gpx' }
	}))
];

describe('Tracking desk: importing a position file', () => {
	beforeAll(async () => {
		const png = await sharp({
			create: { width: 8, height: 8, channels: 3, background: '#123456' }
		})
			.png()
			.toBuffer();
		const pngCase = importCases.find((c) => c.id === 'a PNG named .csv')!;
		pngCase.body = new Uint8Array(png);
	});

	for (const c of importCases) {
		it(
			c.id,
			async () => {
				const outcome = await hostileCase(db, counter, () => importPositions(importEvent(c)), {
					mustRefuse: c.storedAs === undefined,
					saved: async (saved) => expect(await storedFileName(saved)).toBe(c.storedAs)
				});
				if (outcome.kind === 'refused') {
					expect(outcome.message.length).toBeLessThan(2000);
					if (c.message) expect(outcome.message).toMatch(c.message);
				}
			},
			120_000
		);
	}
});

describe('Tracking desk: the CSV preview', () => {
	function previewEvent(body: Body) {
		const event = fakeEvent(
			`/staff/tracking/${SLUG}/preview`,
			tracker,
			{},
			{ slug: SLUG },
			'GET'
		) as unknown as {
			url: URL;
		};
		return {
			...event,
			request: new Request(event.url, {
				method: 'POST',
				body: typeof body === 'function' ? body() : body,
				headers: { origin: 'http://localhost' },
				duplex: 'half'
			} as RequestInit)
		} as never;
	}
	const previews: [string, Body][] = [
		['more than the start of the file', generated(HEADER, 'x', 2 * MB)],
		['a first line of 60,000 columns', generated('', 'c,', 60_000, '\n')],
		['binary', new Uint8Array([0, 0, 0, 255, 10])],
		['an HTML page', '<html><body onload="alert(1)"></body></html>'],
		['no separator', 'just text\nmore text\n'],
		['duplicate columns', 'time,time,lat\n1,2,3\n'],
		['empty', '']
	];
	for (const [id, body] of previews) {
		it(id, async () => {
			await hostileCase(db, counter, () => previewCsv(previewEvent(body)), { mustRefuse: true });
		});
	}
});

// ── the Newsroom's photos ─────────────────────────────────────────────────────────────────────

interface PhotoCase {
	id: string;
	file?: () => Promise<File | string>;
	alt?: string;
	body?: () => BodyInit;
	headers?: Record<string, string>;
	/** a good photo: stored, with this original name (and the alt as typed, spaces collapsed) */
	storedName?: string;
}

const jpeg = () =>
	sharp({ create: { width: 64, height: 48, channels: 3, background: '#1e6e8c' } })
		.jpeg()
		.toBuffer();
const asFile = (bytes: Buffer | string, name: string) =>
	new File([typeof bytes === 'string' ? bytes : new Uint8Array(bytes)], name);

function photoEvent(c: PhotoCase) {
	const event = fakeEvent('/staff/newsroom/media', educator, {}, {}, 'GET') as unknown as {
		url: URL;
	};
	return (async () => {
		let body: BodyInit;
		if (c.body) body = c.body();
		else {
			const form = new FormData();
			const file = await c.file?.();
			if (file !== undefined) form.append('file', file);
			form.append('alt', c.alt ?? 'A green turtle in the pool');
			body = form;
		}
		return {
			...event,
			request: new Request(event.url, {
				method: 'POST',
				body,
				headers: c.headers,
				duplex: 'half'
			} as RequestInit)
		} as never;
	})();
}

const photoCases: PhotoCase[] = [
	{ id: 'a decompression bomb (2.5 gigapixels)', file: async () => asFile(pngBomb(), 'bomb.png') },
	{
		id: 'an image declaring 50000 × 50000 pixels (sharp)',
		file: async () => {
			// a real 1×1 PNG whose header is rewritten to claim 50,000 × 50,000
			const png = await sharp({ create: { width: 1, height: 1, channels: 3, background: '#000' } })
				.png()
				.toBuffer();
			png.writeUInt32BE(50_000, 16);
			png.writeUInt32BE(50_000, 20);
			png.writeUInt32BE(crc32(png.subarray(12, 29)), 29);
			return asFile(png, 'huge.png');
		}
	},
	{
		id: 'an HTML page named .jpg',
		file: async () => asFile('<!doctype html><script>alert(1)</script>', 'photo.jpg')
	},
	{
		id: 'an SVG with script named .png',
		file: async () =>
			asFile('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"/>', 'photo.png')
	},
	{
		id: 'a JPEG with a script after the end',
		file: async () =>
			asFile(Buffer.concat([await jpeg(), Buffer.from('<script>alert(1)</script>')]), 'photo.jpg')
	},
	{ id: 'a CSV named .jpg', file: async () => asFile(HEADER + GOOD_ROW, 'photo.jpg') },
	{ id: 'an empty file', file: async () => asFile('', 'photo.jpg') },
	{
		id: 'a truncated JPEG',
		file: async () => asFile((await jpeg()).subarray(0, 200), 'photo.jpg')
	},
	{ id: 'text instead of a file', file: async () => 'not a file' },
	{ id: 'no file', file: undefined },
	{
		id: 'a photo over 15 MB',
		file: async () => asFile(Buffer.concat([await jpeg(), Buffer.alloc(16 * MB)]), 'big.jpg')
	},
	{
		id: 'a declared length over the limit',
		file: async () => asFile(await jpeg(), 'photo.jpg'),
		headers: { 'content-length': String(100 * MB) }
	},
	{
		// what the server's reader does past BODY_SIZE_LIMIT on a chunked upload
		id: 'a chunked body stopped by the server’s size limit',
		body: () =>
			new ReadableStream<Uint8Array>({
				start(controller) {
					controller.enqueue(
						new TextEncoder().encode('--x\r\nContent-Disposition: form-data; name="file"\r\n\r\n')
					);
					controller.error(
						Object.assign(new Error('request body size exceeded BODY_SIZE_LIMIT'), { status: 413 })
					);
				}
			}),
		headers: { 'content-type': 'multipart/form-data; boundary=x' }
	},
	{
		id: 'a JSON body',
		body: () => JSON.stringify({ file: 'x', alt: 'y' }),
		headers: { 'content-type': 'application/json' }
	},
	{
		id: 'a broken multipart body',
		body: () => '--x\r\nContent-Disposition: form-data; name="file"\r\n\r\nabc',
		headers: { 'content-type': 'multipart/form-data; boundary=x' }
	},
	// a good photo under a hostile name is a safe save, with the name cleaned
	...[...PATH_TRAVERSAL, UNICODE[0], UNICODE[12], XSS[0], OVERSIZED[0]].map((p) => ({
		id: `file name: ${p.id}`,
		file: async () => asFile(await jpeg(), p.value),
		storedName: keptName(p.value)
	})),
	// and hostile alt text is refused or kept (spaces collapsed), never a 500
	...SOME_TEXT.map((p) => ({
		id: `alt text: ${p.id}`,
		file: async () => asFile(await jpeg(), 'photo.jpg'),
		alt: p.value,
		storedName: 'photo.jpg'
	}))
];

describe('Newsroom: uploading a photo', () => {
	for (const c of photoCases) {
		it(
			c.id,
			async () => {
				await hostileCase(db, counter, async () => uploadPhoto(await photoEvent(c)), {
					mustRefuse: c.storedName === undefined,
					saved: async (outcome: Outcome) => {
						const reply = outcome.kind === 'saved' ? await outcome.response!.json() : null;
						const [row] = await db()
							.select()
							.from(media)
							.where(eq(media.id, reply?.id ?? ''));
						expect(row.originalName ?? '').toBe(c.storedName);
						if (c.alt !== undefined) {
							expect(row.alt).toBe(
								c.alt
									.toWellFormed()
									.replace(/\r\n|\r|\n/g, '\r\n')
									.replace(/\s+/g, ' ')
									.trim()
							);
						}
					}
				});
			},
			60_000
		);
	}
});

describe('after the batch', () => {
	it('/healthz still answers 200', expectHealthy);
	it('the row counts checked after each case were true counts', () => expectCountsTrue(db()));
	it('ran at least 80 cases', () => {
		counter.report('uploads');
		expect(counter.total).toBeGreaterThanOrEqual(80);
	});
});
