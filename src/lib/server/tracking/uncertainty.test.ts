import { describe, expect, it } from 'vitest';
import { geodesicDistance } from './geodesy';
import { coordinateUncertaintyInMeters, dataGeneralizations } from './uncertainty';

/**
 * Chapman & Wieczorek 2020, "Georeferencing Best Practices", GBIF, doi:10.15468/doc-gg7h-s853:
 * uncertainty from coordinate precision (WGS84). Their figure for a coordinate given to p degrees
 * is the FULL diagonal of a p × p cell, i.e. how far off a truncated coordinate sitting on one
 * corner can be: at the equator, √(11 131.949² + 11 057.428²) = 15 690.35 m for 0.1°, published
 * as 15 691, so the published values are rounded up to whole metres.
 */
const TABLE = [
	{ precision: 0.1, lat: 0, metres: 15_691 },
	{ precision: 0.1, lat: 30, metres: 14_697 },
	{ precision: 0.01, lat: 0, metres: 1_570 },
	{ precision: 0.01, lat: 30, metres: 1_470 }
];

describe('coordinateUncertaintyInMeters against Georeferencing Best Practices', () => {
	it.each(TABLE)(
		'their figure is the geodesic diagonal of a $precision° cell at $lat° (rounded up)',
		({ precision, lat, metres }) => {
			// Like with like: the geodesic diagonal of a cell of that size centred on the latitude.
			// Their method combines lengths of a degree of latitude and longitude at that latitude
			// (a planar approximation); on cells this small it agrees with the geodesic to well
			// under a metre, so after rounding up both sides must be equal.
			const h = precision / 2;
			const diagonal = geodesicDistance({ lat: lat - h, lon: 0 }, { lat: lat + h, lon: precision });
			expect(Math.ceil(diagonal)).toBe(metres);
		}
	);

	it.each(TABLE)(
		'our radius for a $precision° cell centred at $lat° is half their diagonal, within 2 m',
		({ precision, lat, metres }) => {
			// We publish the cell CENTRE, so the circle containing the cell has half their diagonal
			// as its radius. Tolerance [−0.5, +2] m: their figure is rounded up (half of it is up to
			// 0.5 m high), ours is rounded up (up to 1 m), and ours reaches the farthest corner,
			// the one on the equator side, which at 30° is ~0.8 m beyond half the mean diagonal.
			const ours = coordinateUncertaintyInMeters(lat, precision);
			expect(Number.isInteger(ours)).toBe(true);
			expect(ours - metres / 2).toBeGreaterThanOrEqual(-0.5);
			expect(ours - metres / 2).toBeLessThanOrEqual(2);
		}
	);
});

describe('coordinateUncertaintyInMeters on the public grid', () => {
	const cells = [0.1, 0.25, 0.5, 1];

	it.each([0.05, 17.95, -33.85, 60.05, -75.05, 89.95, -89.95])(
		'is the smallest whole-metre circle round the centre %s that holds the whole cell',
		(lat) => {
			for (const cellDeg of cells) {
				const centre = { lat, lon: 0 };
				const u = coordinateUncertaintyInMeters(lat, cellDeg);
				const h = cellDeg / 2;
				let farthest = 0;
				// Sample the whole boundary, not just the corners, to check the corner argument.
				for (let i = 0; i <= 40; i++) {
					const s = -h + (i / 40) * cellDeg;
					const edge = [
						{ lat: Math.max(-90, lat - h), lon: s },
						{ lat: Math.min(90, lat + h), lon: s },
						{ lat: Math.max(-90, Math.min(90, lat + s)), lon: -h },
						{ lat: Math.max(-90, Math.min(90, lat + s)), lon: h }
					];
					for (const p of edge) farthest = Math.max(farthest, geodesicDistance(centre, p));
				}
				expect(u).toBeGreaterThanOrEqual(farthest);
				expect(u - farthest).toBeLessThan(1);
			}
		}
	);

	it('is never zero, shrinks towards the poles, is symmetric and grows with the cell', () => {
		expect(coordinateUncertaintyInMeters(0.05, 0.1)).toBe(7846);
		expect(coordinateUncertaintyInMeters(60.05, 0.1)).toBeLessThan(
			coordinateUncertaintyInMeters(30.05, 0.1)
		);
		expect(coordinateUncertaintyInMeters(-30.05, 0.1)).toBe(
			coordinateUncertaintyInMeters(30.05, 0.1)
		);
		expect(coordinateUncertaintyInMeters(89.95, 0.1)).toBeGreaterThan(0);
		const tenth = coordinateUncertaintyInMeters(0.05, 0.1);
		const whole = coordinateUncertaintyInMeters(0.5, 1);
		expect(whole / tenth).toBeGreaterThan(9.9);
		expect(whole / tenth).toBeLessThan(10.1);
		expect(coordinateUncertaintyInMeters(0, 1e-9)).toBe(1);
	});

	it('refuses impossible inputs', () => {
		expect(() => coordinateUncertaintyInMeters(91, 0.1)).toThrow(RangeError);
		expect(() => coordinateUncertaintyInMeters(0, 0)).toThrow(RangeError);
		expect(() => coordinateUncertaintyInMeters(0, Number.NaN)).toThrow(RangeError);
	});
});

describe('dataGeneralizations', () => {
	it('says what was done: grid size, merging, dates only and the delay', () => {
		const text = dataGeneralizations(0.1, 7);
		expect(text).toContain('0.1° × 0.1°');
		expect(text).toContain('centre');
		expect(text).toContain('merged');
		expect(text).toContain('times withheld');
		expect(text).toContain('7 days');
		expect(dataGeneralizations(0.25, 14)).toContain('0.25° × 0.25°');
		expect(dataGeneralizations(0.25, 14)).toContain('14 days');
	});
});
