import { validateStyleMin } from '@maplibre/maplibre-gl-style-spec';
import { describe, expect, it } from 'vitest';
import { baseStyle, graticule, LAND_URL } from './style';

describe('the basemap style', () => {
	for (const withGraticule of [true, false]) {
		describe(withGraticule ? 'with graticule' : 'without graticule', () => {
			const style = baseStyle({ graticule: withGraticule });
			const text = JSON.stringify(style);

			it('needs no glyphs, no sprite and nothing from another server', () => {
				expect(style).not.toHaveProperty('glyphs');
				expect(style).not.toHaveProperty('sprite');
				expect(text).not.toMatch(/https?:/i);
				expect(text).not.toMatch(/\/\//);
				expect(style.layers.some((l) => l.type === 'symbol')).toBe(false);
			});

			it('takes its land from our own route', () => {
				expect(style.sources.land).toEqual(expect.objectContaining({ data: LAND_URL }));
				expect(LAND_URL).toBe('/map/land.json');
				expect(style.layers.map((l) => l.id)).toEqual(
					withGraticule ? ['sea', 'graticule', 'land', 'coast'] : ['sea', 'land', 'coast']
				);
			});

			// The reference validator from the MapLibre style specification package.
			it('is a valid MapLibre style', () => {
				expect(validateStyleMin(style)).toEqual([]);
				const broken = {
					...style,
					layers: [...style.layers, { ...style.layers[1], id: 'x', source: 'nowhere' }]
				};
				expect(validateStyleMin(broken as typeof style)).not.toEqual([]);
			});
		});
	}

	it('draws a meridian every 10° and a parallel every 10° up to ±80°', () => {
		const lines = graticule(10).features[0].geometry.coordinates;
		expect(lines).toHaveLength(37 + 17);
		expect(lines[0][0]).toEqual([-180, -80]);
		expect(lines.at(-1)?.[0]).toEqual([-180, 80]);
	});
});
