import { describe, expect, it } from 'vitest';
import { normaliseName, suggestMapping, validateMapping } from './mapping';

describe('suggestMapping', () => {
	it('recognises common spellings, ignoring case, punctuation and units in brackets', () => {
		expect(
			suggestMapping([
				'ID',
				'Date Time',
				'Latitude',
				'LONGITUDE',
				'Location Class',
				'Error Semi-major axis (m)',
				'error_semi_minor_axis',
				'Ellipse orientation [deg]',
				'Error radius (m)'
			])
		).toEqual({
			time: 'Date Time',
			lat: 'Latitude',
			lon: 'LONGITUDE',
			lc: 'Location Class',
			semiMajorM: 'Error Semi-major axis (m)',
			semiMinorM: 'error_semi_minor_axis',
			orientationDeg: 'Ellipse orientation [deg]',
			errorRadiusM: 'Error radius (m)'
		});
		expect(suggestMapping(['utc', 'lat', 'lng', 'lc'])).toEqual({
			time: 'utc',
			lat: 'lat',
			lon: 'lng',
			lc: 'lc'
		});
		expect(
			suggestMapping([
				'timestamp',
				'lat',
				'long',
				'quality',
				'semi_major_m',
				'semiminor',
				'orientation'
			])
		).toEqual({
			time: 'timestamp',
			lat: 'lat',
			lon: 'long',
			lc: 'quality',
			semiMajorM: 'semi_major_m',
			semiMinorM: 'semiminor',
			orientationDeg: 'orientation'
		});
	});

	it('never takes hdop for an error radius, and leaves unknown columns out', () => {
		expect(suggestMapping(['time', 'lat', 'lon', 'hdop', 'satellites'])).toEqual({
			time: 'time',
			lat: 'lat',
			lon: 'lon'
		});
	});

	it('prefers a full timestamp column over separate date and time columns', () => {
		expect(suggestMapping(['date', 'time', 'datetime']).time).toBe('datetime');
		expect(suggestMapping(['date', 'timestamp', 'time']).time).toBe('timestamp');
	});

	it('normalises names', () => {
		expect(normaliseName(' Location_Class ')).toBe('locationclass');
		expect(normaliseName('Semi-major axis (m)')).toBe('semimajoraxis');
	});
});

describe('validateMapping', () => {
	const headers = ['when', 'lat', 'lon', 'lc', 'smaj'];

	it('accepts distinct existing columns and trims the choices', () => {
		expect(
			validateMapping(headers, { time: 'when', lat: ' lat ', lon: 'lon', lc: 'lc', semiMajorM: '' })
		).toEqual({ ok: true, mapping: { time: 'when', lat: 'lat', lon: 'lon', lc: 'lc' } });
		expect(validateMapping(headers, { time: 'when', lat: 'lat', lon: 'lon' }, 'g')).toEqual({
			ok: true,
			mapping: { time: 'when', lat: 'lat', lon: 'lon' },
			defaultClass: 'G'
		});
	});

	it('names each missing, unknown or reused column', () => {
		expect(
			validateMapping(headers, { lat: 'lat', lon: 'lat', semiMajorM: 'Smaj', lc: 'lc' })
		).toEqual({
			ok: false,
			errors: {
				time: 'Choose the column that holds the time.',
				lon: 'Column “lat” is already used for the latitude.',
				semiMajorM: 'There is no column named “Smaj” in this file.'
			}
		});
	});

	it('needs a class column or a valid default class', () => {
		expect(validateMapping(headers, { time: 'when', lat: 'lat', lon: 'lon' })).toEqual({
			ok: false,
			errors: {
				lc: 'Choose the column that holds the location class, or a default class for every row.'
			}
		});
		expect(
			validateMapping(headers, { time: 'when', lat: 'lat', lon: 'lon', lc: 'lc' }, 'Q')
		).toEqual({
			ok: false,
			errors: { defaultClass: '“Q” is not a location class; choose one of G, 3, 2, 1, 0, A, B, Z.' }
		});
	});
});
