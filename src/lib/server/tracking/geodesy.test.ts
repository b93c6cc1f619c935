import { describe, expect, it } from 'vitest';
import { direct, geodesicDistance, inverse, trackLength, type LatLon } from './geodesy';
import { mulberry32 } from './synthetic';

const MM = 1e-3;

// WGS84 (NIMA TR8350.2): a = 6378137 m, f = 1/298.257223563.
const A = 6378137;
const F = 1 / 298.257223563;
const B = A * (1 - F);

/**
 * Vincenty's inverse formula (T. Vincenty, "Direct and inverse solutions of geodesics on the
 * ellipsoid with application of nested equations", Survey Review 23:176, 1975), written here
 * from the paper as an independent check. It does not converge for nearly antipodal points.
 */
function vincentyInverse(p: LatLon, q: LatLon): number {
	const rad = Math.PI / 180;
	const L = (((q.lon - p.lon + 540) % 360) - 180) * rad;
	const U1 = Math.atan((1 - F) * Math.tan(p.lat * rad));
	const U2 = Math.atan((1 - F) * Math.tan(q.lat * rad));
	const sinU1 = Math.sin(U1);
	const cosU1 = Math.cos(U1);
	const sinU2 = Math.sin(U2);
	const cosU2 = Math.cos(U2);
	let lambda = L;
	let sinSigma: number;
	let cosSigma: number;
	let sigma: number;
	let cos2Alpha: number;
	let cos2SigmaM: number;
	for (let iteration = 0; ; iteration++) {
		if (iteration > 200) throw new Error('Vincenty did not converge');
		const sinLambda = Math.sin(lambda);
		const cosLambda = Math.cos(lambda);
		sinSigma = Math.hypot(cosU2 * sinLambda, cosU1 * sinU2 - sinU1 * cosU2 * cosLambda);
		if (sinSigma === 0) return 0;
		cosSigma = sinU1 * sinU2 + cosU1 * cosU2 * cosLambda;
		sigma = Math.atan2(sinSigma, cosSigma);
		const sinAlpha = (cosU1 * cosU2 * sinLambda) / sinSigma;
		cos2Alpha = 1 - sinAlpha * sinAlpha;
		cos2SigmaM = cos2Alpha !== 0 ? cosSigma - (2 * sinU1 * sinU2) / cos2Alpha : 0;
		const C = (F / 16) * cos2Alpha * (4 + F * (4 - 3 * cos2Alpha));
		const previous = lambda;
		lambda =
			L +
			(1 - C) *
				F *
				sinAlpha *
				(sigma + C * sinSigma * (cos2SigmaM + C * cosSigma * (-1 + 2 * cos2SigmaM ** 2)));
		if (Math.abs(lambda - previous) < 1e-13) break;
	}
	const u2 = (cos2Alpha * (A * A - B * B)) / (B * B);
	const bigA = 1 + (u2 / 16384) * (4096 + u2 * (-768 + u2 * (320 - 175 * u2)));
	const bigB = (u2 / 1024) * (256 + u2 * (-128 + u2 * (74 - 47 * u2)));
	const deltaSigma =
		bigB *
		sinSigma *
		(cos2SigmaM +
			(bigB / 4) *
				(cosSigma * (-1 + 2 * cos2SigmaM ** 2) -
					(bigB / 6) * cos2SigmaM * (-3 + 4 * sinSigma ** 2) * (-3 + 4 * cos2SigmaM ** 2)));
	return B * bigA * (sigma - deltaSigma);
}

/** Great-circle central angle in degrees, only to keep random pairs away from antipodes. */
function centralAngle(p: LatLon, q: LatLon): number {
	const rad = Math.PI / 180;
	const c =
		Math.sin(p.lat * rad) * Math.sin(q.lat * rad) +
		Math.cos(p.lat * rad) * Math.cos(q.lat * rad) * Math.cos((q.lon - p.lon) * rad);
	return Math.acos(Math.max(-1, Math.min(1, c))) / rad;
}

function randomPoint(random: () => number): LatLon {
	// Uniform on the sphere: latitude from the arcsine of a uniform deviate.
	return { lat: (Math.asin(2 * random() - 1) * 180) / Math.PI, lon: 360 * random() - 180 };
}

describe('GeographicLib worked examples (GeographicLib documentation "Examples"; Karney 2013, J. Geodesy 87:43–55)', () => {
	it('inverse: Wellington (−41.32, 174.81) → Salamanca (40.96, −5.50)', () => {
		const r = inverse({ lat: -41.32, lon: 174.81 }, { lat: 40.96, lon: -5.5 });
		expect(Math.abs(r.distance - 19_959_679.267)).toBeLessThan(MM);
		expect(geodesicDistance({ lat: -41.32, lon: 174.81 }, { lat: 40.96, lon: -5.5 })).toBeCloseTo(
			19_959_679.267,
			3
		);
		expect(r.azimuth1).toBeCloseTo(161.067669986, 8);
		expect(r.azimuth2).toBeCloseTo(18.825195123, 8);
	});

	it('direct: from (−32.06, 115.74), azimuth 225°, 20 000 km → (32.11195529, −63.95925278)', () => {
		const from = { lat: -32.06, lon: 115.74 };
		const to = direct(from, 225, 20_000_000);
		expect(to.lat).toBeCloseTo(32.11195529, 8);
		expect(to.lon).toBeCloseTo(-63.95925278, 8);
		// 1e-8° is about 1 mm; measured on the ground against the published point:
		expect(geodesicDistance(to, { lat: 32.11195529, lon: -63.95925278 })).toBeLessThan(MM);
		// 20 000 km runs past the antipode (arc 180.07°), so the shortest way back is shorter.
		expect(geodesicDistance(from, to)).toBeLessThan(20_000_000);
	});
});

describe('lengths of 0.1° on WGS84 (REFERENCES.md "Geodesy", from the WGS84 formulas)', () => {
	it('along the equator: 11 131.949 m', () => {
		expect(
			Math.abs(geodesicDistance({ lat: 0, lon: 0 }, { lat: 0, lon: 0.1 }) - 11_131.949)
		).toBeLessThan(MM);
	});

	it('along the 30°N parallel: 9 648.628 m (the geodesic is a hair shorter than the parallel arc)', () => {
		const d = geodesicDistance({ lat: 30, lon: 0 }, { lat: 30, lon: 0.1 });
		expect(Math.abs(d - 9_648.628)).toBeLessThan(MM);
		// The parallel is not a geodesic: the arc N·cosφ·Δλ must be longer, by well under 1 mm.
		const phi = (30 * Math.PI) / 180;
		const e2 = F * (2 - F);
		const parallelArc =
			(A / Math.sqrt(1 - e2 * Math.sin(phi) ** 2)) * Math.cos(phi) * ((0.1 * Math.PI) / 180);
		expect(d).toBeLessThan(parallelArc);
		expect(parallelArc - d).toBeLessThan(MM);
	});

	it('of latitude at the equator: 11 057.428 m', () => {
		const d = geodesicDistance({ lat: -0.05, lon: 0 }, { lat: 0.05, lon: 0 });
		expect(Math.abs(d - 11_057.428)).toBeLessThan(MM);
	});

	it('of latitude at 30°N: 11 085.244 m', () => {
		const d = geodesicDistance({ lat: 29.95, lon: 0 }, { lat: 30.05, lon: 0 });
		expect(Math.abs(d - 11_085.244)).toBeLessThan(MM);
	});
});

describe('agreement with Vincenty 1975 (Survey Review 23:176), an independent method', () => {
	it('2 000 seeded random pairs away from near-antipodal cases agree to < 1 mm', () => {
		const random = mulberry32(20_240_611);
		let checked = 0;
		let worst = 0;
		while (checked < 2000) {
			const p = randomPoint(random);
			const q = randomPoint(random);
			if (centralAngle(p, q) > 170) continue;
			worst = Math.max(worst, Math.abs(geodesicDistance(p, q) - vincentyInverse(p, q)));
			checked++;
		}
		expect(worst).toBeLessThan(MM);
	});

	it('the check itself can fail: a 1 cm error would be caught', () => {
		const p = { lat: 10, lon: 20 };
		const q = { lat: -35, lon: 80 };
		expect(Math.abs(geodesicDistance(p, q) + 0.01 - vincentyInverse(p, q))).toBeGreaterThan(MM);
	});
});

describe("hard cases from GeodTest's categories (Karney 2010, doi:10.5281/zenodo.32156)", () => {
	const random = mulberry32(32156);

	it('nearly antipodal: inverse then direct returns to the end point, and both directions agree', () => {
		for (let i = 0; i < 200; i++) {
			const p = { lat: 180 * random() - 90, lon: 360 * random() - 180 };
			const q = {
				lat: -p.lat + (random() - 0.5) * 1e-2,
				lon: ((p.lon + 180 + (random() - 0.5) * 1e-2 + 540) % 360) - 180
			};
			const r = inverse(p, q);
			const back = direct(p, r.azimuth1, r.distance);
			expect(geodesicDistance(back, q)).toBeLessThan(MM);
			expect(Math.abs(geodesicDistance(q, p) - r.distance)).toBeLessThan(MM);
			// no geodesic is longer than half a meridian
			expect(r.distance).toBeLessThanOrEqual(halfMeridian() + MM);
		}
	});

	it('exactly antipodal on the equator: half a meridian, from the meridian-arc series (Helmert)', () => {
		const d = geodesicDistance({ lat: 0, lon: 0 }, { lat: 0, lon: 180 });
		expect(Math.abs(d - halfMeridian())).toBeLessThan(MM);
		expect(d).toBeCloseTo(20_003_931.4586, 3);
	});

	it('one end at a pole', () => {
		for (let i = 0; i < 100; i++) {
			const pole = { lat: random() < 0.5 ? 90 : -90, lon: 360 * random() - 180 };
			const q = { lat: 170 * random() - 85, lon: 360 * random() - 180 };
			expect(Math.abs(geodesicDistance(pole, q) - vincentyInverse(pole, q))).toBeLessThan(MM);
		}
		// pole to equator is a quarter meridian
		expect(
			Math.abs(geodesicDistance({ lat: 90, lon: 0 }, { lat: 0, lon: 33 }) - halfMeridian() / 2)
		).toBeLessThan(MM);
	});

	it('nearly meridional', () => {
		for (let i = 0; i < 100; i++) {
			const p = { lat: 170 * random() - 85, lon: 360 * random() - 180 };
			const q = { lat: 170 * random() - 85, lon: p.lon + (random() - 0.5) * 1e-6 };
			expect(Math.abs(geodesicDistance(p, q) - vincentyInverse(p, q))).toBeLessThan(MM);
		}
	});

	it('nearly equatorial', () => {
		for (let i = 0; i < 100; i++) {
			const p = { lat: (random() - 0.5) * 1e-6, lon: 360 * random() - 180 };
			const q = { lat: (random() - 0.5) * 1e-6, lon: p.lon + (random() - 0.5) * 300 };
			expect(Math.abs(geodesicDistance(p, q) - vincentyInverse(p, q))).toBeLessThan(MM);
		}
	});

	it('very short: 1 cm', () => {
		for (let i = 0; i < 100; i++) {
			const p = { lat: 178 * random() - 89, lon: 360 * random() - 180 };
			const q = direct(p, 360 * random(), 0.01);
			// 15 nm: the accuracy GeographicLib states for WGS84 (Karney 2013)
			expect(Math.abs(geodesicDistance(p, q) - 0.01)).toBeLessThan(15e-9);
			expect(Math.abs(vincentyInverse(p, q) - 0.01)).toBeLessThan(1e-6);
		}
		expect(geodesicDistance({ lat: 12, lon: 34 }, { lat: 12, lon: 34 })).toBe(0);
	});

	it('crossing the antimeridian: 179.9° → −179.9° is about 22 km, not about 40 000 km', () => {
		const d = geodesicDistance({ lat: 0, lon: 179.9 }, { lat: 0, lon: -179.9 });
		expect(d).toBeGreaterThan(20_000);
		expect(d).toBeLessThan(25_000);
		// two of the 0.1° equatorial lengths of REFERENCES.md
		expect(Math.abs(d - 2 * 11_131.949)).toBeLessThan(2 * MM);
		const p = { lat: -20, lon: 179.95 };
		const q = { lat: -20.3, lon: -179.8 };
		expect(Math.abs(geodesicDistance(p, q) - vincentyInverse(p, q))).toBeLessThan(MM);
		expect(geodesicDistance(p, q)).toBeLessThan(50_000);
	});
});

describe('trackLength', () => {
	it('sums the legs, and is 0 for fewer than two points', () => {
		const pts = [
			{ lat: 0, lon: 179.9 },
			{ lat: 0, lon: -179.9 },
			{ lat: 0, lon: -179.8 }
		];
		expect(Math.abs(trackLength(pts) - 3 * 11_131.949)).toBeLessThan(3 * MM);
		expect(trackLength([])).toBe(0);
		expect(trackLength([{ lat: 1, lon: 2 }])).toBe(0);
	});
});

/**
 * Half the meridian of WGS84 from Helmert's series in the third flattening n:
 * (a / (1 + n)) · (1 + n²/4 + n⁴/64 + n⁶/256 + 25 n⁸/16384) · π.
 */
function halfMeridian(): number {
	const n = F / (2 - F);
	return (
		(A / (1 + n)) * (1 + n ** 2 / 4 + n ** 4 / 64 + n ** 6 / 256 + (25 * n ** 8) / 16384) * Math.PI
	);
}
