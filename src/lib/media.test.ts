import { describe, expect, it } from 'vitest';
import { imageMarkdown, mediaSrcset, mediaUrl, mediaWidthsFor, nearestWidth } from './media';

describe('media widths and URLs', () => {
	it('never stores a width above the original, and keeps small originals at their own width', () => {
		expect(mediaWidthsFor(6000)).toEqual([480, 960, 1600]);
		expect(mediaWidthsFor(1600)).toEqual([480, 960, 1600]);
		expect(mediaWidthsFor(1000)).toEqual([480, 960]);
		expect(mediaWidthsFor(480)).toEqual([480]);
		expect(mediaWidthsFor(300)).toEqual([300]);
	});

	it('picks the nearest stored width at or below the one asked for, else the smallest', () => {
		expect(nearestWidth([480, 960, 1600], 1200)).toBe(960);
		expect(nearestWidth([1600, 480, 960], 5000)).toBe(1600);
		expect(nearestWidth([480, 960], 100)).toBe(480);
		expect(nearestWidth([300], 960)).toBe(300);
	});

	it('builds URLs and srcsets the serving route understands', () => {
		expect(mediaUrl('abc')).toBe('/media/abc/960.webp');
		expect(mediaUrl('abc', 480, 'jpeg')).toBe('/media/abc/480.jpeg');
		expect(mediaSrcset('abc', [960, 480, 960])).toBe(
			'/media/abc/480.webp 480w, /media/abc/960.webp 960w'
		);
	});

	it('escapes alt text so that it cannot end the Markdown image early', () => {
		expect(imageMarkdown('Green turtle\nin the [big] pool \\o/', '/media/a/960.webp')).toBe(
			'![Green turtle in the \\[big\\] pool \\\\o/](/media/a/960.webp)'
		);
	});
});
