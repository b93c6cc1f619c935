import { describe, expect, it } from 'vitest';
import {
	LOCATION_CLASS_INFO,
	LOCATION_CLASSES,
	classRank,
	compareClass,
	errorRadius,
	isLocationClass,
	meetsMinimum
} from './classes';

describe("location classes (CLS, Argos User's Manual, 2016 online edition, §3.4)", () => {
	it('error radii as published: 3 < 250 m, 2 250–500 m, 1 500–1500 m, 0 > 1500 m; GPS < 100 m', () => {
		expect(errorRadius('G')).toEqual({ minM: 0, maxM: 100 });
		expect(errorRadius('3')).toEqual({ minM: 0, maxM: 250 });
		expect(errorRadius('2')).toEqual({ minM: 250, maxM: 500 });
		expect(errorRadius('1')).toEqual({ minM: 500, maxM: 1500 });
		expect(errorRadius('0')).toEqual({ minM: 1500, maxM: null });
	});

	it('A and B carry no estimate; Z is invalid', () => {
		expect(errorRadius('A')).toBeNull();
		expect(errorRadius('B')).toBeNull();
		expect(errorRadius('Z')).toBeNull();
		expect(LOCATION_CLASS_INFO.Z.valid).toBe(false);
		expect(LOCATION_CLASSES.filter((lc) => !LOCATION_CLASS_INFO[lc].valid)).toEqual(['Z']);
	});

	it('ranks best first: G, 3, 2, 1, 0, A, B, Z', () => {
		const shuffled = ['B', 'Z', '1', 'G', 'A', '3', '0', '2'] as const;
		expect([...shuffled].sort(compareClass)).toEqual(['G', '3', '2', '1', '0', 'A', 'B', 'Z']);
		expect(classRank('G')).toBe(0);
		expect(compareClass('3', '0')).toBeLessThan(0);
	});

	it('meetsMinimum keeps the minimum and better, never Z', () => {
		expect(meetsMinimum('1', '1')).toBe(true);
		expect(meetsMinimum('G', '1')).toBe(true);
		expect(meetsMinimum('0', '1')).toBe(false);
		expect(meetsMinimum('B', 'B')).toBe(true);
		expect(meetsMinimum('Z', 'B')).toBe(false);
		expect(meetsMinimum('Z', 'Z')).toBe(false);
	});

	it('isLocationClass accepts exactly the eight classes', () => {
		for (const lc of LOCATION_CLASSES) expect(isLocationClass(lc)).toBe(true);
		for (const bad of ['z', 'C', '4', '', 3, null, undefined])
			expect(isLocationClass(bad)).toBe(false);
		expect(() => classRank('C' as 'G')).toThrow(RangeError);
	});
});
