/**
 * Deterministic synthetic satellite tracks for tests, the benchmark and the demo. Nothing here
 * describes a real animal: the path is a seeded random walk around a chosen heading.
 *
 * Model, per fix:
 *  - fix times are evenly spaced (`fixesPerDay`) with a seeded jitter of up to ±`timeJitter`
 *    of the interval; the first fix is exactly at `startTime` and exactly at `start`;
 *  - the true path moves at `speedKmh` (±15 % per leg) along `headingDeg` plus a heading
 *    offset that wanders (a mean-reverting random walk, `wanderDeg` per leg), using `direct()`;
 *  - each reported position is the true one moved in a random direction by a class-sized
 *    error (|N(0,1)| × the class's typical error, capped at 2×, times `noiseScale`);
 *  - optionally, a fraction of fixes become class Z at a wild position (`zFraction`) or
 *    spikes displaced by about `spikeKm` (`spikeFraction`). Injected fixes are never the first
 *    and never next to another injected fix, so each one is a clean isolated case.
 */
import { direct, type LatLon } from './geodesy';
import { LOCATION_CLASSES, type Fix, type LocationClass } from './types';

/** mulberry32 (Tommy Ettinger's 32-bit PRNG): small, fast, good enough for test data. */
export function mulberry32(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

/** Standard normal deviate from a uniform source (Box–Muller). */
export function gaussian(random: () => number): number {
	const u = 1 - random(); // (0, 1]: keeps log finite
	return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
}

/** Typical position error per class, metres; within the ranges of classes.ts. */
const TYPICAL_ERROR_M: Record<LocationClass, number> = {
	G: 20,
	'3': 125,
	'2': 375,
	'1': 1000,
	'0': 2000,
	A: 2500,
	B: 4000,
	Z: 50_000
};

export const DEFAULT_CLASS_MIX: Readonly<Partial<Record<LocationClass, number>>> = {
	'3': 2,
	'2': 2,
	'1': 2,
	'0': 1,
	A: 2,
	B: 1
};

export interface SyntheticTrackOptions {
	seed: number;
	start: LatLon;
	startTime: number;
	days: number;
	fixesPerDay: number;
	headingDeg: number;
	speedKmh: number;
	/** relative weights of the classes drawn for ordinary fixes (Z is ignored here) */
	classMix?: Partial<Record<LocationClass, number>>;
	/** standard deviation of the heading change per leg, degrees (default 15) */
	wanderDeg?: number;
	/** multiplies the class-sized position errors (default 1; 0 = exact positions) */
	noiseScale?: number;
	/** fraction of the interval by which fix times may shift either way (default 0.3, max 0.45) */
	timeJitter?: number;
	/** fraction of fixes replaced by class Z fixes at a wild position (default 0) */
	zFraction?: number;
	/** fraction of fixes displaced by about `spikeKm` (default 0) */
	spikeFraction?: number;
	/** spike displacement, km (default 100; each spike gets 75–125 % of it) */
	spikeKm?: number;
	/** fix ids are `${idPrefix}-${index}` (default 'syn') */
	idPrefix?: string;
}

export interface SyntheticTrack {
	fixes: Fix[];
	/** ids of the injected spikes */
	spikeIds: string[];
	/** ids of the injected class Z fixes */
	zIds: string[];
	/** length of the true path, metres */
	truePathLengthM: number;
}

export function syntheticTrack(options: SyntheticTrackOptions): SyntheticTrack {
	const {
		seed,
		start,
		startTime,
		days,
		fixesPerDay,
		headingDeg,
		speedKmh,
		wanderDeg = 15,
		noiseScale = 1,
		zFraction = 0,
		spikeFraction = 0,
		spikeKm = 100,
		idPrefix = 'syn'
	} = options;
	const timeJitter = Math.min(options.timeJitter ?? 0.3, 0.45);
	if (!(days > 0) || !(fixesPerDay > 0)) throw new RangeError('days and fixesPerDay must be > 0');

	const random = mulberry32(seed);
	const pickClass = classPicker(options.classMix ?? DEFAULT_CLASS_MIX, random);
	const count = Math.max(1, Math.round(days * fixesPerDay));
	const intervalMs = 86_400_000 / fixesPerDay;
	const speedMs = speedKmh / 3.6;

	const fixes: Fix[] = [];
	const spikeIds: string[] = [];
	const zIds: string[] = [];
	let truth: LatLon = { lat: start.lat, lon: start.lon };
	let offset = 0;
	let lastTime = startTime;
	let previousInjected = true; // the first fix is never injected
	let truePathLengthM = 0;

	for (let k = 0; k < count; k++) {
		const time =
			k === 0
				? startTime
				: Math.round(startTime + (k + timeJitter * (2 * random() - 1)) * intervalMs);
		if (k > 0) {
			offset = 0.9 * offset + wanderDeg * gaussian(random);
			const legM =
				speedMs * ((time - lastTime) / 1000) * clamp(1 + 0.15 * gaussian(random), 0.5, 1.5);
			truth = direct(truth, headingDeg + offset, legM);
			truePathLengthM += legM;
		}
		lastTime = time;
		const id = `${idPrefix}-${k}`;

		const roll = random();
		let lc = pickClass();
		let errorM = noiseScale * TYPICAL_ERROR_M[lc] * Math.min(Math.abs(gaussian(random)), 2);
		const errorAzimuth = 360 * random();
		if (!previousInjected && roll < zFraction) {
			lc = 'Z';
			errorM = TYPICAL_ERROR_M.Z * (0.5 + random());
			zIds.push(id);
			previousInjected = true;
		} else if (!previousInjected && roll < zFraction + spikeFraction) {
			errorM = spikeKm * 1000 * (0.75 + 0.5 * random());
			spikeIds.push(id);
			previousInjected = true;
		} else {
			previousInjected = false;
		}

		const reported = k === 0 || errorM === 0 ? truth : direct(truth, errorAzimuth, errorM);
		fixes.push({ id, time, lat: reported.lat, lon: reported.lon, lc });
	}
	return { fixes, spikeIds, zIds, truePathLengthM };
}

function clamp(x: number, lo: number, hi: number): number {
	return Math.min(hi, Math.max(lo, x));
}

function classPicker(
	mix: Partial<Record<LocationClass, number>>,
	random: () => number
): () => LocationClass {
	const classes = LOCATION_CLASSES.filter((lc) => lc !== 'Z' && (mix[lc] ?? 0) > 0);
	const weights = classes.map((lc) => mix[lc] as number);
	const total = weights.reduce((a, b) => a + b, 0);
	if (classes.length === 0 || !(total > 0))
		throw new RangeError('classMix needs a positive weight');
	return () => {
		let r = random() * total;
		for (let i = 0; i < classes.length; i++) {
			r -= weights[i];
			if (r < 0) return classes[i];
		}
		return classes[classes.length - 1];
	};
}
