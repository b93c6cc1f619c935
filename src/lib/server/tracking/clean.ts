/**
 * Track cleaning: turns raw satellite fixes into the cleaned track every later computation uses.
 * Every fix that is dropped comes back in `rejected` with a reason and a readable detail.
 *
 * Steps, in order:
 *  1. invalid coordinates (non-finite time, lat or lon; |lat| > 90; |lon| > 180);
 *  2. class Z (and any value that is not a location class);
 *  3. below the minimum class;
 *  4. sort by time;
 *  5. exact duplicates (same time, lat, lon and class): keep one;
 *  6. same-time conflicts: keep the best class; on a tie, the first in canonical order;
 *  7. the land filter, when given;
 *  8. the speed filter of McConnell, Chambers & Fedak (1992), Antarctic Science 4:393–398.
 *
 * The result never depends on the order of the input: fixes are put in a canonical order
 * (time, then class best first, then id, lat, lon) before anything is decided, so "the first"
 * of two equal candidates means the one with the smaller id, not the one uploaded first.
 */
import { classRank, isLocationClass, meetsMinimum } from './classes';
import { geodesicDistance } from './geodesy';
import type { Fix, LocationClass, Rejected } from './types';

/**
 * Default maximum speed, 2 m/s: the default `vmax` of the R package argosfilter
 * (C. Freitas; functions vmask and sdafilter), which implements the same filter.
 */
export const DEFAULT_MAX_SPEED_MS = 2;
export const DEFAULT_MINIMUM_CLASS: LocationClass = 'B';

export interface CleanOptions {
	/** worst class still kept (default 'B': everything but Z) */
	minimumClass?: LocationClass;
	/** maximum plausible travel speed in m/s (default 2) */
	maxSpeedMs?: number;
	/** true = the fix is well inland and must go (supplied by the land mask) */
	landFilter?: (fix: Fix) => boolean;
}

export interface CleanResult {
	/** the cleaned track, in time order (the input objects, not copies) */
	kept: Fix[];
	rejected: Rejected[];
	/**
	 * `legMetres[i]` is `geodesicDistance(kept[i], kept[i + 1])`, computed by the speed filter
	 * anyway; hand it to `publicProjection` so the track is not measured twice. Length
	 * `kept.length − 1` (0 for an empty track).
	 */
	legMetres: Float64Array;
}

export function cleanTrack(fixes: readonly Fix[], options: CleanOptions = {}): CleanResult {
	const minimumClass = options.minimumClass ?? DEFAULT_MINIMUM_CLASS;
	const maxSpeedMs = options.maxSpeedMs ?? DEFAULT_MAX_SPEED_MS;
	if (!isLocationClass(minimumClass)) {
		throw new RangeError(`unknown minimum class "${String(minimumClass)}"`);
	}
	if (!Number.isFinite(maxSpeedMs) || maxSpeedMs <= 0) {
		throw new RangeError(`maxSpeedMs must be a positive number, got ${maxSpeedMs}`);
	}

	const rejectedInvalid: Rejected[] = [];
	const rejectedClass: Rejected[] = [];
	const rejectedMinimum: Rejected[] = [];
	const candidates: Fix[] = [];
	for (const fix of fixes) {
		const problem = coordinateProblem(fix);
		if (problem) {
			rejectedInvalid.push({ fix, reason: 'invalid_coordinates', detail: problem });
		} else if (!isLocationClass(fix.lc)) {
			rejectedClass.push({
				fix,
				reason: 'invalid_class',
				detail: `class "${String(fix.lc)}" is not a location class`
			});
		} else if (fix.lc === 'Z') {
			rejectedClass.push({ fix, reason: 'invalid_class', detail: 'class Z is invalid' });
		} else if (!meetsMinimum(fix.lc, minimumClass)) {
			rejectedMinimum.push({
				fix,
				reason: 'below_minimum_class',
				detail: `class ${fix.lc} is below the minimum class ${minimumClass}`
			});
		} else {
			candidates.push(fix);
		}
	}
	// Invalid fixes may have no usable time, so they get an order of their own.
	rejectedInvalid.sort((a, b) => compareLoose(a.fix, b.fix));
	rejectedClass.sort((a, b) => compareLoose(a.fix, b.fix));
	rejectedMinimum.sort((a, b) => compareCanonical(a.fix, b.fix));
	const rejected: Rejected[] = [...rejectedInvalid, ...rejectedClass, ...rejectedMinimum];

	candidates.sort(compareCanonical);
	const unique = resolveSameTime(candidates, rejected);

	let track = unique;
	if (options.landFilter) {
		const landFilter = options.landFilter;
		track = [];
		for (const fix of unique) {
			if (landFilter(fix)) {
				rejected.push({ fix, reason: 'on_land', detail: 'well inland according to the land mask' });
			} else {
				track.push(fix);
			}
		}
	}

	const { kept, legMetres } = speedFilter(track, maxSpeedMs, rejected);
	return { kept, rejected, legMetres };
}

function coordinateProblem(fix: Fix): string | null {
	if (typeof fix.time !== 'number' || !Number.isFinite(fix.time))
		return 'time is not a valid instant';
	if (typeof fix.lat !== 'number' || !Number.isFinite(fix.lat)) return 'latitude is not a number';
	if (typeof fix.lon !== 'number' || !Number.isFinite(fix.lon)) return 'longitude is not a number';
	if (Math.abs(fix.lat) > 90) return `latitude ${fix.lat} is outside −90…90`;
	if (Math.abs(fix.lon) > 180) return `longitude ${fix.lon} is outside −180…180`;
	return null;
}

function compareStrings(a: string, b: string): number {
	return a < b ? -1 : a > b ? 1 : 0;
}

function compareCanonical(a: Fix, b: Fix): number {
	return (
		a.time - b.time ||
		classRank(a.lc) - classRank(b.lc) ||
		compareStrings(a.id, b.id) ||
		a.lat - b.lat ||
		a.lon - b.lon
	);
}

/** A total order for fixes whose fields may be missing or NaN. */
function compareLoose(a: Fix, b: Fix): number {
	return (
		compareStrings(String(a.id), String(b.id)) ||
		compareStrings(String(a.time), String(b.time)) ||
		compareStrings(String(a.lat), String(b.lat)) ||
		compareStrings(String(a.lon), String(b.lon)) ||
		compareStrings(String(a.lc), String(b.lc))
	);
}

/** Steps 5 and 6 on a canonically sorted list: one fix per instant survives. */
function resolveSameTime(sorted: Fix[], rejected: Rejected[]): Fix[] {
	const out: Fix[] = [];
	const conflicts: Rejected[] = [];
	let i = 0;
	while (i < sorted.length) {
		let j = i + 1;
		while (j < sorted.length && sorted[j].time === sorted[i].time) j++;
		const keeper = sorted[i];
		out.push(keeper);
		if (j - i > 1) {
			// Within one instant the best class comes first, so sorted[i] is the keeper.
			const seen = new Map<string, Fix>([[samePlaceKey(keeper), keeper]]);
			for (let k = i + 1; k < j; k++) {
				const fix = sorted[k];
				const key = samePlaceKey(fix);
				const twin = seen.get(key);
				if (twin) {
					rejected.push({
						fix,
						reason: 'duplicate',
						detail: `same time, position and class as fix ${twin.id}`
					});
					continue;
				}
				seen.set(key, fix);
				const samePosition = fix.lat === keeper.lat && fix.lon === keeper.lon;
				const why =
					fix.lc === keeper.lc
						? `equal class ${fix.lc}, the first is kept`
						: `class ${keeper.lc} is better than ${fix.lc}`;
				conflicts.push({
					fix,
					reason: 'same_time_conflict',
					detail: `same time as fix ${keeper.id}${samePosition ? '' : ' at a different position'}; ${why}`
				});
			}
		}
		i = j;
	}
	// All duplicates are reported before the conflicts, matching the order of the steps.
	rejected.push(...conflicts);
	return out;
}

function samePlaceKey(fix: Fix): string {
	return `${fix.lat}|${fix.lon}|${fix.lc}`;
}

/**
 * McConnell, Chambers & Fedak (1992): for each fix, the root-mean-square of the speeds
 * (geodesic distance / elapsed time) to the two previous and two next fixes. The single fix
 * with the highest value above `vmax` is removed, values are recomputed, and this repeats until
 * no value is above `vmax`. Ties go to the worse class, then to the earlier fix.
 *
 * Ends: a fix near either end of the track uses the neighbours that exist (3 for the second
 * and second-to-last fix, 2 for the first and last), so a bad first or last fix can still be
 * removed. (argosfilter instead leaves the two fixes at each end unfiltered.) A track of one
 * fix has nothing to compare with and is kept.
 *
 * Cost: after a removal only the fixes within two positions of it change, so their values are
 * recomputed and pushed onto a max-heap; stale heap entries are skipped when popped (lazy
 * invalidation). The distance to the next-but-one fix is computed only when the triangle
 * inequality (d(a,c) ≤ d(a,b) + d(b,c)) cannot already prove the fix is under `vmax`, so a
 * clean track costs about one geodesic per fix. Overall O(n log n).
 */
function speedFilter(
	track: Fix[],
	vmax: number,
	rejected: Rejected[]
): { kept: Fix[]; legMetres: Float64Array } {
	const n = track.length;
	if (n < 2) return { kept: track, legMetres: new Float64Array(0) };

	const time = new Float64Array(n);
	const rank = new Uint8Array(n);
	const prev = new Int32Array(n);
	const next = new Int32Array(n);
	const d1 = new Float64Array(n); // metres to the next live fix
	const d2 = new Float64Array(n); // metres to the next-but-one live fix; NaN = not computed yet
	const version = new Uint32Array(n);
	const alive = new Uint8Array(n).fill(1);
	for (let i = 0; i < n; i++) {
		time[i] = track[i].time / 1000;
		rank[i] = classRank(track[i].lc);
		prev[i] = i - 1;
		next[i] = i + 1 < n ? i + 1 : -1;
		d1[i] = i + 1 < n ? geodesicDistance(track[i], track[i + 1]) : NaN;
		d2[i] = NaN;
	}

	const exactD2 = (i: number): number => {
		if (Number.isNaN(d2[i])) d2[i] = geodesicDistance(track[i], track[next[next[i]]]);
		return d2[i];
	};

	// Squared speed sums: upper bound first; the exact value only when the bound exceeds vmax.
	const vmax2 = vmax * vmax;
	const rmsAbove = (i: number): number => {
		const p1 = prev[i];
		const p2 = p1 >= 0 ? prev[p1] : -1;
		const n1 = next[i];
		const n2 = n1 >= 0 ? next[n1] : -1;
		let count = 0;
		let near = 0; // squared speeds to the adjacent fixes (always exact)
		let bound = 0; // upper bound of squared speeds to the fixes two away
		if (p1 >= 0) {
			const v = d1[p1] / (time[i] - time[p1]);
			near += v * v;
			count++;
		}
		if (n1 >= 0) {
			const v = d1[i] / (time[n1] - time[i]);
			near += v * v;
			count++;
		}
		if (p2 >= 0) {
			const v = (d1[p2] + d1[p1]) / (time[i] - time[p2]);
			bound += v * v;
			count++;
		}
		if (n2 >= 0) {
			const v = (d1[i] + d1[n1]) / (time[n2] - time[i]);
			bound += v * v;
			count++;
		}
		if (count === 0) return 0;
		// The small margin keeps rounding in the bound from hiding a real excess.
		if ((near + bound) / count <= vmax2 * (1 - 1e-9)) return 0;
		let far = 0;
		if (p2 >= 0) {
			const v = exactD2(p2) / (time[i] - time[p2]);
			far += v * v;
		}
		if (n2 >= 0) {
			const v = exactD2(i) / (time[n2] - time[i]);
			far += v * v;
		}
		return Math.sqrt((near + far) / count);
	};

	const heap = new MaxHeap((a, b) => rank[a] - rank[b] || b - a);
	const refresh = (i: number) => {
		if (i < 0) return;
		version[i]++;
		const value = rmsAbove(i);
		if (value > vmax) heap.push(value, i, version[i]);
	};
	for (let i = 0; i < n; i++) refresh(i);

	for (;;) {
		const top = heap.pop();
		if (!top) break;
		const x = top.index;
		if (!alive[x] || top.version !== version[x]) continue;

		rejected.push({
			fix: track[x],
			reason: 'speed',
			detail: `${formatSpeed(top.value, vmax)} m/s RMS to neighbours, above ${vmax} m/s`
		});
		alive[x] = 0;
		const p1 = prev[x];
		const p2 = p1 >= 0 ? prev[p1] : -1;
		const n1 = next[x];
		const n2 = n1 >= 0 ? next[n1] : -1;
		if (p1 >= 0) next[p1] = n1;
		if (n1 >= 0) prev[n1] = p1;
		if (p1 >= 0) {
			d1[p1] = n1 >= 0 ? geodesicDistance(track[p1], track[n1]) : NaN;
			d2[p1] = NaN;
		}
		if (p2 >= 0) d2[p2] = NaN;
		refresh(p2);
		refresh(p1);
		refresh(n1);
		refresh(n2);
	}

	// d1 of a live fix is the distance to the next live fix, measured with the same arguments in
	// the same order as the projection would, so handing it on changes no result.
	const kept: Fix[] = [];
	for (let i = 0; i < n; i++) if (alive[i]) kept.push(track[i]);
	const legMetres = new Float64Array(Math.max(kept.length - 1, 0));
	for (let i = 0, k = 0; i < n; i++) if (alive[i] && next[i] >= 0) legMetres[k++] = d1[i];
	return { kept, legMetres };
}

/**
 * One pass of the McConnell et al. (1992) statistic over a time-sorted track, without removing
 * anything: for each fix, the RMS in m/s of the speeds to up to two previous and two next fixes
 * (ends use the neighbours that exist; a lone fix gets 0). For display and checks.
 */
export function speedRms(track: readonly Fix[]): number[] {
	return track.map((fix, i) => {
		let sum = 0;
		let count = 0;
		for (const j of [i - 2, i - 1, i + 1, i + 2]) {
			if (j < 0 || j >= track.length) continue;
			const v = geodesicDistance(fix, track[j]) / (Math.abs(track[j].time - fix.time) / 1000);
			sum += v * v;
			count++;
		}
		return count ? Math.sqrt(sum / count) : 0;
	});
}

function formatSpeed(value: number, vmax: number): string {
	const short = value.toFixed(1);
	// Never print "2.0 m/s … above 2 m/s".
	return Number(short) > vmax ? short : value.toFixed(3);
}

/**
 * Binary max-heap of (value, index, version) in parallel arrays. `tieWorse(a, b) > 0` puts
 * index a before b when values are equal.
 */
class MaxHeap {
	private values: number[] = [];
	private indices: number[] = [];
	private versions: number[] = [];

	constructor(private readonly tieWorse: (a: number, b: number) => number) {}

	private before(a: number, b: number): boolean {
		const va = this.values[a];
		const vb = this.values[b];
		if (va !== vb) return va > vb;
		return this.tieWorse(this.indices[a], this.indices[b]) > 0;
	}

	private swap(a: number, b: number) {
		[this.values[a], this.values[b]] = [this.values[b], this.values[a]];
		[this.indices[a], this.indices[b]] = [this.indices[b], this.indices[a]];
		[this.versions[a], this.versions[b]] = [this.versions[b], this.versions[a]];
	}

	push(value: number, index: number, version: number) {
		this.values.push(value);
		this.indices.push(index);
		this.versions.push(version);
		let c = this.values.length - 1;
		while (c > 0) {
			const p = (c - 1) >> 1;
			if (!this.before(c, p)) break;
			this.swap(c, p);
			c = p;
		}
	}

	pop(): { value: number; index: number; version: number } | null {
		const size = this.values.length;
		if (size === 0) return null;
		const top = { value: this.values[0], index: this.indices[0], version: this.versions[0] };
		const last = size - 1;
		this.swap(0, last);
		this.values.pop();
		this.indices.pop();
		this.versions.pop();
		let p = 0;
		for (;;) {
			const l = 2 * p + 1;
			const r = l + 1;
			let best = p;
			if (l < last && this.before(l, best)) best = l;
			if (r < last && this.before(r, best)) best = r;
			if (best === p) break;
			this.swap(p, best);
			p = best;
		}
		return top;
	}
}
