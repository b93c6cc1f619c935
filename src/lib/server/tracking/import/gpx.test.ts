import { Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { parsePositions } from './index';
import { collect, NOW, positions, problems, streamOf } from './test-support';
import { ImportFileError } from './types';

function parse(text: string | Uint8Array, extra: object = {}) {
	return collect(parsePositions(streamOf(text), { format: 'gpx', now: NOW, ...extra }));
}

const gpx = (body: string) =>
	`<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="test" xmlns="http://www.topografix.com/GPX/1/1" xmlns:tw="urn:example:tideward">${body}</gpx>`;

describe('parsePositions, GPX', () => {
	it('reads wpt and trkpt in document order, class G by default, skipping route points', async () => {
		const items = await parse(
			'\uFEFF' +
				gpx(`
			<metadata><time>2024-05-01T00:00:00Z</time></metadata>
			<wpt lat="-12.5" lon="130.25"><ele>3</ele><time>2024-03-01T14:00:00+02:00</time><name>A</name></wpt>
			<rte><rtept lat="1" lon="1"><time>2024-03-01T00:00:00Z</time></rtept></rte>
			<trk><name>t</name><trkseg>
				<trkpt lat="-12.6" lon="130.3"><time><![CDATA[2024-03-01T13:00:00Z]]></time><hdop>0.8</hdop></trkpt>
				<trkpt lat="-12.7" lon="130.35"><time>2024-03-01 14:00:00</time></trkpt>
			</trkseg></trk>
			<wpt lat="0" lon="180"><time>2024-03-01T15:00:00Z</time></wpt>`)
		);
		expect(items).toEqual([
			{
				ok: true,
				position: {
					row: 1,
					time: Date.UTC(2024, 2, 1, 12),
					lat: -12.5,
					lon: 130.25,
					lc: 'G',
					semiMajorM: null,
					semiMinorM: null,
					orientationDeg: null,
					errorRadiusM: null
				}
			},
			{
				ok: true,
				position: expect.objectContaining({ row: 2, time: Date.UTC(2024, 2, 1, 13), lc: 'G' })
			},
			{
				ok: true,
				position: expect.objectContaining({ row: 3, time: Date.UTC(2024, 2, 1, 14), lat: -12.7 })
			},
			{ ok: true, position: expect.objectContaining({ row: 4, lat: 0, lon: 180 }) }
		]);
	});

	it('takes the class from extensions, then from <type>, then the default', async () => {
		const items = await parse(
			gpx(`
			<wpt lat="1" lon="2"><time>2024-03-01T12:00:00Z</time><type>a</type>
				<extensions><tw:fix><tw:location_class>2</tw:location_class><tw:semi_major>900</tw:semi_major>
				<tw:semi_minor>150.5</tw:semi_minor><tw:orientation>170</tw:orientation></tw:fix></extensions></wpt>
			<wpt lat="1" lon="2"><time>2024-03-01T12:00:00Z</time><type> b </type></wpt>
			<wpt lat="1" lon="2"><time>2024-03-01T12:00:00Z</time><type>Buoy</type>
				<extensions><tw:error_radius>18</tw:error_radius></extensions></wpt>`),
			{ defaultClass: '3' }
		);
		expect(positions(items)).toEqual([
			{
				row: 1,
				time: Date.UTC(2024, 2, 1, 12),
				lat: 1,
				lon: 2,
				lc: '2',
				semiMajorM: 900,
				semiMinorM: 150.5,
				orientationDeg: 170,
				errorRadiusM: null
			},
			expect.objectContaining({ row: 2, lc: 'B' }),
			expect.objectContaining({ row: 3, lc: '3', errorRadiusM: 18 })
		]);
	});

	it('reports each bad point with the element or attribute at fault', async () => {
		const items = await parse(
			gpx(`
			<wpt lat="91" lon="2"/>
			<trk><trkseg>
				<trkpt lon="2,5"><time>2024-03-01T12:00:00</time></trkpt>
				<trkpt lat="1" lon="2"><time>2024-03-01T12:00:00Z</time>
					<extensions><lc>Q</lc><error_radius>-4</error_radius></extensions></trkpt>
			</trkseg></trk>`)
		);
		expect(items.map((item) => item.ok)).toEqual([false, false, false]);
		expect(problems(items)).toEqual([
			{ row: 1, column: 'time', message: 'The point has no <time>; every fix needs a time.' },
			{ row: 1, column: 'lat', message: 'Latitude 91 is outside -90 to 90.' },
			{
				row: 2,
				column: 'time',
				message:
					'“2024-03-01T12:00:00” has no time zone; add Z for UTC or an offset such as +02:00.'
			},
			{ row: 2, column: 'lat', message: 'The point has no lat attribute.' },
			{
				row: 2,
				column: 'lon',
				message: '“2,5” uses a decimal comma; use a decimal point (2.5).'
			},
			{
				row: 3,
				column: 'extensions/lc',
				message: '“Q” is not a location class; expected one of G, 3, 2, 1, 0, A, B, Z.'
			},
			{
				row: 3,
				column: 'extensions/error_radius',
				message: 'Error radius must not be negative (-4).'
			}
		]);
	});

	it('refuses files that are not well-formed UTF-8 GPX', async () => {
		const cases: [string | Uint8Array, string][] = [
			['', 'The file is empty.'],
			[
				'<?xml version="1.0"?><kml xmlns="http://www.opengis.net/kml/2.2"></kml>',
				'This XML file is not GPX: its root element is <kml>, expected <gpx>.'
			],
			[
				'<?xml version="1.0" encoding="ISO-8859-1"?><gpx></gpx>',
				'The file declares the ISO-8859-1 encoding; save it as UTF-8 and upload it again.'
			],
			[
				Buffer.concat([
					Buffer.from('<gpx><wpt lat="1" lon="2"><name>'),
					Buffer.from([0xe9]),
					Buffer.from('</name></wpt></gpx>')
				]),
				'The file is not UTF-8 text; save it as UTF-8 and upload it again.'
			],
			[
				'<gpx><wpt lat="1" lon="2"></gpx>',
				'This is not well-formed XML (1:32: unexpected close tag).'
			],
			['<gpx><wpt lat="1" lon="2">', 'This is not well-formed XML (1:26: unclosed tag: wpt).']
		];
		for (const [text, message] of cases) {
			await expect(parse(text), String(text)).rejects.toThrow(new ImportFileError(message));
		}
	});

	it('stops reading the source when the caller stops early', async () => {
		const state = { pulled: 0, finished: false };
		async function* text() {
			try {
				yield '<gpx><trk><trkseg>';
				for (let i = 0; i < 100_000; i++) {
					state.pulled++;
					yield '<trkpt lat="1" lon="2"><time>2024-03-01T12:00:00Z</time></trkpt>';
				}
				yield '</trkseg></trk></gpx>';
			} finally {
				state.finished = true;
			}
		}
		let seen = 0;
		for await (const item of parsePositions(Readable.from(text(), { objectMode: false }), {
			format: 'gpx',
			now: NOW
		})) {
			expect(item.ok).toBe(true);
			if (++seen === 3) break;
		}
		await new Promise((resolve) => setImmediate(resolve));
		expect(state.finished).toBe(true);
		expect(state.pulled).toBeLessThan(5_000);
	});
});
