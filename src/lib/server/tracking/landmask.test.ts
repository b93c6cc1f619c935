import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { feature, mesh } from 'topojson-client';
import type { GeometryCollection, Topology } from 'topojson-specification';
import { beforeAll, describe, expect, it } from 'vitest';
import { cleanTrack } from './clean';
import { direct, geodesicDistance, type LatLon } from './geodesy';
import {
	DEFAULT_INLAND_METRES,
	LandIndex,
	LocalPlane,
	LocalSphere,
	landFilterFor,
	landMaskFrom,
	loadLandIndex,
	loadLandMask,
	type LandMask
} from './landmask';
import { mulberry32 } from './synthetic';
import type { Fix } from './types';

// The same file the mask loads, read again here for the independent checks.
const topology = JSON.parse(
	readFileSync(createRequire(import.meta.url).resolve('world-atlas/land-10m.json'), 'utf8')
) as Topology<{ land: GeometryCollection }>;

let mask: LandMask;
let index: LandIndex;
beforeAll(async () => {
	mask = await loadLandMask();
	index = await loadLandIndex();
});

/** Coastline segments straight from topojson-client's `mesh`, longitudes unwrapped per segment. */
function coastSegments(): [LatLon, LatLon][] {
	const out: [LatLon, LatLon][] = [];
	for (const line of mesh(topology, topology.objects.land).coordinates) {
		for (let i = 1; i < line.length; i++) {
			const [lon1, lat1] = line[i - 1];
			const [lon2, lat2] = line[i];
			// Natural Earth's cuts along 180° are not coastline.
			if (Math.abs(lon1) === 180 && Math.abs(lon2) === 180) continue;
			out.push([
				{ lat: lat1, lon: lon1 },
				{ lat: lat2, lon: lon1 + ((((lon2 - lon1) % 360) + 540) % 360) - 180 }
			]);
		}
	}
	return out;
}

/**
 * Brute force with geographiclib: the smallest geodesic distance from p to points every ≤ 10 m
 * along the coast segments that come within `nearDeg` degrees of p. A segment is sampled only
 * when its ends do not already prove it farther than the best so far: a point on it is at
 * least (d(p, a) + d(p, b) − d(a, b)) / 2 from p.
 */
function bruteForceCoastDistance(p: LatLon, segments: [LatLon, LatLon][], nearDeg: number): number {
	const dLon = (lon: number) => Math.abs(((((lon - p.lon) % 360) + 540) % 360) - 180);
	const candidates: { a: LatLon; b: LatLon; length: number; lower: number }[] = [];
	let best = Infinity;
	for (const [a, b] of segments) {
		if (Math.min(Math.abs(a.lat - p.lat), Math.abs(b.lat - p.lat)) > nearDeg) continue;
		if (Math.min(dLon(a.lon), dLon(b.lon)) > nearDeg) continue;
		const da = geodesicDistance(p, a);
		const db = geodesicDistance(p, b);
		const length = geodesicDistance(a, b);
		best = Math.min(best, da, db);
		candidates.push({ a, b, length, lower: (da + db - length) / 2 - 1 });
	}
	for (const { a, b, length, lower } of candidates) {
		if (lower >= best) continue;
		const steps = Math.max(1, Math.ceil(length / 10));
		for (let s = 1; s < steps; s++) {
			const t = s / steps;
			let lon = a.lon + t * (b.lon - a.lon);
			if (lon > 180) lon -= 360;
			if (lon < -180) lon += 360;
			best = Math.min(best, geodesicDistance(p, { lat: a.lat + t * (b.lat - a.lat), lon }));
		}
	}
	return best;
}

/**
 * Brute force over every coastline vertex (an upper bound of the true distance), measured with
 * geographiclib. Only vertices within 2 % of the nearest on a `LocalSphere` are measured, which
 * is safe because the sphere is within 0.5 % of the geodesic (checked below).
 */
function nearestVertexDistance(p: LatLon, segments: [LatLon, LatLon][]): number {
	const sphere = new LocalSphere(p.lat, p.lon);
	const rough = segments.map(([a]) => sphere.distance(a.lat, a.lon));
	const cutoff = rough.reduce((m, d) => Math.min(m, d), Infinity) * 1.02;
	let best = Infinity;
	segments.forEach(([a], i) => {
		if (rough[i] <= cutoff) best = Math.min(best, geodesicDistance(p, a));
	});
	return best;
}

/**
 * The Atlantic shore of Florida at 26.5°N (Boynton Beach, near 80.05°W) runs almost due north
 * and south, with no lagoon in the 1:10m data (at 28°N the Indian River Lagoon splits it in two).
 * The shore longitude is found in the data by bisection between the Florida Current (79.9°W)
 * and the land west of the coastal towns (80.5°W).
 */
const FLORIDA_LAT = 26.5;
function floridaCoast(): LatLon {
	let sea = -79.9;
	let land = -80.5;
	expect(mask.isLand(FLORIDA_LAT, sea)).toBe(false);
	expect(mask.isLand(FLORIDA_LAT, land)).toBe(true);
	for (let i = 0; i < 60; i++) {
		const mid = (sea + land) / 2;
		if (mask.isLand(FLORIDA_LAT, mid)) land = mid;
		else sea = mid;
	}
	return { lat: FLORIDA_LAT, lon: land };
}
const west = (from: LatLon, metres: number) => direct(from, 270, metres);
const east = (from: LatLon, metres: number) => direct(from, 90, metres);

describe('distance estimates used by the index, against geographiclib (geodesy.ts)', () => {
	// The index decides by these estimates only when they are more than 1 % away from the
	// threshold (DISTANCE_TOLERANCE); these bounds show that 1 % is a wide margin.
	const random = mulberry32(1);
	function worstError(
		make: (lat: number, lon: number) => { distance(lat: number, lon: number): number },
		maxLat: number,
		maxMetres: number
	): number {
		let worst = 0;
		for (let i = 0; i < 3000; i++) {
			const p = { lat: (2 * random() - 1) * maxLat, lon: 360 * random() - 180 };
			const q = direct(p, 360 * random(), 100 + (maxMetres - 100) * random());
			if (Math.abs(q.lat) > maxLat) continue;
			const exact = geodesicDistance(p, q);
			worst = Math.max(worst, Math.abs(make(p.lat, p.lon).distance(q.lat, q.lon) - exact) / exact);
		}
		return worst;
	}
	const plane = (lat: number, lon: number) => new LocalPlane(lat, lon);
	const sphere = (lat: number, lon: number) => new LocalSphere(lat, lon);

	it('the local plane is within 0.001 % up to 5 km (5 cm at the threshold)', () => {
		expect(worstError(plane, 85, 5_000)).toBeLessThan(1e-5);
	});
	it('the local plane is within 0.2 % up to 100 km and 85° of latitude, where the index uses it', () => {
		expect(worstError(plane, 85, 100_000)).toBeLessThan(2e-3);
	});
	it('the local sphere is within 0.5 % at any distance and latitude', () => {
		expect(worstError(sphere, 90, 5_000)).toBeLessThan(5e-3);
		expect(worstError(sphere, 90, 5_000_000)).toBeLessThan(5e-3);
	});
	it('the plane alone would be wrong near a pole, which is why the index switches to the sphere', () => {
		expect(worstError(plane, 90, 100_000)).toBeGreaterThan(0.05);
	});
});

describe('inside or outside: the grid index agrees with a plain ray cast over every ring', () => {
	it('4 000 points, half of them within 2 km of a coastline', () => {
		// The rings exactly as topojson-client's `feature` returns them. A ring that jumps across
		// 180° and back encloses, in the plane, the whole strip between its two jumps (for
		// Eurasia, 65°N to 69°N round the world), so points in such strips are left out.
		const rings: number[][][] = [];
		const geo = feature(topology, topology.objects.land);
		for (const f of 'features' in geo ? geo.features : [geo]) {
			const g = f.geometry;
			if (g.type === 'Polygon') rings.push(...g.coordinates);
			if (g.type === 'MultiPolygon') for (const polygon of g.coordinates) rings.push(...polygon);
		}
		const jumpStrips: [number, number][] = [];
		for (const ring of rings) {
			const jumps: number[] = [];
			for (let i = 1; i < ring.length; i++) {
				if (Math.abs(ring[i][0] - ring[i - 1][0]) > 180) jumps.push(ring[i][1], ring[i - 1][1]);
			}
			if (jumps.length) jumpStrips.push([Math.min(...jumps) - 1e-6, Math.max(...jumps) + 1e-6]);
		}
		// Edges listed under every whole degree of latitude they span, only to save time.
		const bands: number[][][] = Array.from({ length: 180 }, () => []);
		for (const ring of rings) {
			for (let i = 1; i < ring.length; i++) {
				const [x1, y1] = ring[i - 1];
				const [x2, y2] = ring[i];
				const lo = Math.floor(Math.min(y1, y2)) + 90;
				const hi = Math.min(179, Math.floor(Math.max(y1, y2)) + 90);
				for (let b = lo; b <= hi; b++) bands[b].push([x1, y1, x2, y2]);
			}
		}
		const rayCast = (lat: number, lon: number) => {
			let inside = false;
			for (const [x1, y1, x2, y2] of bands[Math.floor(lat) + 90]) {
				if (y1 > lat !== y2 > lat && x1 + ((lat - y1) * (x2 - x1)) / (y2 - y1) > lon) {
					inside = !inside;
				}
			}
			return inside;
		};

		const random = mulberry32(2);
		const vertices = coastSegments().map(([a]) => a);
		const points: LatLon[] = [];
		while (points.length < 4000) {
			const p =
				points.length % 2
					? { lat: -60 + 144 * random(), lon: -179 + 358 * random() }
					: direct(
							vertices[Math.floor(random() * vertices.length)],
							360 * random(),
							2000 * random()
						);
			if (Math.abs(p.lon) > 179 || p.lat < -60) continue;
			if (jumpStrips.some(([lo, hi]) => p.lat >= lo && p.lat <= hi)) continue;
			points.push(p);
		}
		const disagreements = points.filter(
			(p) => index.isLand(p.lat, p.lon) !== rayCast(p.lat, p.lon)
		);
		expect(disagreements).toEqual([]);
		// Both kinds of answer occur near the coast, so the comparison means something.
		const land = points.filter((p, i) => i % 2 === 0 && index.isLand(p.lat, p.lon)).length;
		expect(land).toBeGreaterThan(400);
		expect(land).toBeLessThan(1600);
	});
});

describe('well-known places', () => {
	it.each([
		['mid-Atlantic', 30, -40],
		['mid-Pacific, on the equator', 0, -160],
		['Gulf of Mexico', 25, -90],
		['middle of the Caspian Sea (a lake, left out of Natural Earth land)', 42, 50.5],
		['North Pole (the Arctic Ocean)', 90, 0]
	])('%s (%f, %f) is water: not inland, distance 0', (_, lat, lon) => {
		expect(mask.isLand(lat, lon)).toBe(false);
		expect(mask.isWellInland(lat, lon)).toBe(false);
		expect(mask.inlandDistance(lat, lon)).toBe(0);
	});

	it.each([
		['central USA (Nebraska–Kansas border)', 40, -100],
		['central Africa (DR Congo)', 0, 25],
		['central Siberia', 60, 100],
		['South Pole (Antarctic ice sheet)', -90, 0],
		['South Pole, any longitude', -90, 123.4]
	])('%s (%f, %f) is well inland, hundreds of km from the sea', (_, lat, lon) => {
		expect(mask.isLand(lat, lon)).toBe(true);
		expect(mask.isWellInland(lat, lon)).toBe(true);
		expect(mask.inlandDistance(lat, lon)).toBeGreaterThan(500_000);
	});

	it('far-inland distances match a brute force over every coastline vertex (geographiclib) within 0.5 %', () => {
		const segments = coastSegments();
		for (const p of [
			{ lat: 40, lon: -100 },
			{ lat: -90, lon: 0 }
		]) {
			const reference = nearestVertexDistance(p, segments);
			expect(Math.abs(mask.inlandDistance(p.lat, p.lon) - reference) / reference).toBeLessThan(
				0.005
			);
		}
	});

	it.each([
		// Areas from each island's encyclopedia entry. A disc around a point that reaches no coast
		// lies inside the island, so no point is farther from the coast than √(area/π).
		['Saba, Caribbean Netherlands (13 km²)', 17.633, -63.233, 13],
		['Nauru, central Pacific (21 km²)', -0.533, 166.933, 21]
	])('%s: land, but never well inland', (_, lat, lon, km2) => {
		expect(mask.isLand(lat, lon)).toBe(true);
		expect(mask.isWellInland(lat, lon)).toBe(false);
		const bound = Math.sqrt((km2 * 1e6) / Math.PI);
		expect(mask.inlandDistance(lat, lon)).toBeLessThan(bound * 1.25); // the 1:10m outline is coarse
		expect(mask.inlandDistance(lat, lon)).toBeLessThan(DEFAULT_INLAND_METRES);
	});
});

describe('a straight coast: Atlantic Florida at 26.5°N', () => {
	it('2 km inland is kept, 20 km inland is removed', () => {
		const coast = floridaCoast();
		const near = west(coast, 2_000);
		const far = west(coast, 20_000);
		expect(mask.isLand(near.lat, near.lon)).toBe(true);
		expect(mask.isWellInland(near.lat, near.lon)).toBe(false);
		expect(mask.isWellInland(far.lat, far.lon)).toBe(true);
		// The walk started on the coast, so the nearest coast is no farther than the walk; the
		// shore runs north–south, so it is not much nearer either.
		expect(mask.inlandDistance(near.lat, near.lon)).toBeLessThanOrEqual(2_000.5);
		expect(mask.inlandDistance(near.lat, near.lon)).toBeGreaterThan(1_900);
		expect(mask.inlandDistance(far.lat, far.lon)).toBeLessThanOrEqual(20_000.5);
		expect(mask.inlandDistance(far.lat, far.lon)).toBeGreaterThan(19_000);
		const offshore = east(coast, 1_000);
		expect(mask.isLand(offshore.lat, offshore.lon)).toBe(false);
		expect(mask.inlandDistance(offshore.lat, offshore.lon)).toBe(0);
	});

	it('distances near the coast match a brute-force geodesic search within 0.5 % or 20 m', () => {
		const segments = coastSegments();
		const coast = floridaCoast();
		const points: LatLon[] = [
			west(coast, 500),
			west(coast, 2_000),
			west(coast, 4_900),
			west(coast, 5_100),
			west(coast, 20_000),
			{ lat: 17.633, lon: -63.233 }, // Saba
			{ lat: 66, lon: -175 }, // Chukotka
			{ lat: 69.5, lon: 25 }, // northern Norway, Finnmark plateau
			{ lat: -17.8, lon: 178 } // Viti Levu, Fiji
		];
		for (const p of points) {
			const reference = bruteForceCoastDistance(p, segments, 1.5);
			const ours = mask.inlandDistance(p.lat, p.lon);
			expect(Math.abs(ours - reference)).toBeLessThanOrEqual(Math.max(20, 0.005 * reference));
		}
	});

	it('the threshold is a setting: 20 km inland is kept at 25 km and removed at 10 km', async () => {
		const far = west(floridaCoast(), 20_000);
		expect((await loadLandMask({ inlandMetres: 25_000 })).isWellInland(far.lat, far.lon)).toBe(
			false
		);
		expect((await loadLandMask({ inlandMetres: 10_000 })).isWellInland(far.lat, far.lon)).toBe(
			true
		);
	});

	it('isWellInland agrees with inlandDistance > threshold, also right at the threshold', () => {
		const coast = floridaCoast();
		for (const metres of [1_000, 5_000, 12_345]) {
			const m = landMaskFrom(index, { inlandMetres: metres });
			for (const walked of [metres - 30, metres - 5, metres + 5, metres + 30]) {
				const p = west(coast, walked);
				expect(m.isWellInland(p.lat, p.lon)).toBe(m.inlandDistance(p.lat, p.lon) > metres);
			}
		}
		const random = mulberry32(3);
		const vertices = coastSegments().map(([a]) => a);
		for (let i = 0; i < 2000; i++) {
			const p = direct(
				vertices[Math.floor(random() * vertices.length)],
				360 * random(),
				12_000 * random()
			);
			expect(mask.isWellInland(p.lat, p.lon)).toBe(mask.inlandDistance(p.lat, p.lon) > 5_000);
		}
	});
});

describe('across the antimeridian and at the poles', () => {
	it('Chukotka: the 180th meridian crosses land between about 65°N and 69°N; 67°N is inland on both sides', () => {
		for (const lon of [180, -180, 179.99, -179.99]) {
			expect(mask.isLand(67, lon)).toBe(true);
			expect(mask.isWellInland(67, lon)).toBe(true);
		}
		// The cut along 180° is not a coast: the distance does not drop there.
		const eastSide = mask.inlandDistance(67, -179.9999);
		const westSide = mask.inlandDistance(67, 179.9999);
		expect(eastSide).toBeGreaterThan(20_000);
		expect(Math.abs(eastSide - westSide)).toBeLessThan(50);
		expect(mask.isWellInland(66, -175)).toBe(true); // Chukchi Peninsula interior
	});

	it('Taveuni, Fiji, which the 180th meridian crosses (about 10.5 km wide): land on both sides, never well inland', () => {
		const distances = [179.9999, 180, -180, -179.9999].map((lon) => {
			expect(mask.isLand(-16.87, lon)).toBe(true);
			return mask.inlandDistance(-16.87, lon);
		});
		for (const d of distances) expect(d).toBeLessThan(10_500 / 2);
		expect(Math.abs(distances[0] - distances[3])).toBeLessThan(50);
	});

	it('Viti Levu, Fiji (about 146 × 106 km), centre 17.8°S 178°E: well inland', () => {
		expect(mask.isWellInland(-17.8, 178)).toBe(true);
	});

	it('Antarctica is closed round the South Pole; the Arctic Ocean is open at the North Pole', () => {
		expect(mask.isWellInland(-90, 0)).toBe(true);
		expect(mask.isWellInland(-89.9, 179.9)).toBe(true);
		expect(mask.isWellInland(-89.9, -179.9)).toBe(true);
		expect(mask.isWellInland(-80, 0)).toBe(true);
		expect(mask.isLand(90, 0)).toBe(false);
		expect(mask.isLand(89.9, -45)).toBe(false);
	});
});

describe('hand-made topologies (the repairs, independent of the Natural Earth data)', () => {
	/** One polygon per ring, coordinates unquantised, written the way world-atlas writes them. */
	function indexOf(...rings: number[][][]): LandIndex {
		const built: Topology = {
			type: 'Topology',
			arcs: rings,
			objects: {
				land: {
					type: 'GeometryCollection',
					geometries: rings.map((_, i) => ({ type: 'Polygon' as const, arcs: [[i]] }))
				}
			}
		};
		return new LandIndex(built);
	}

	it('an island 2° wide centred on 180°, its ring jumping across the antimeridian', () => {
		const island = landMaskFrom(
			indexOf([
				[179, 10],
				[-179, 10],
				[-179, 12],
				[179, 12],
				[179, 10]
			])
		);
		for (const lon of [179.5, 180, -180, -179.5]) expect(island.isLand(11, lon)).toBe(true);
		for (const [lat, lon] of [
			[11, 178.5],
			[11, -178.5],
			[9.5, 180],
			[12.5, -180]
		]) {
			expect(island.isLand(lat, lon)).toBe(false);
		}
		// The nearest coast from (11°N, 180°) is a side at 179°E or 179°W, 1° of longitude away;
		// the cut along 180° is not coast. The sides are straight in longitude/latitude, so the
		// nearest point is (within metres) at the same latitude.
		const expected = geodesicDistance({ lat: 11, lon: 180 }, { lat: 11, lon: 179 });
		expect(island.inlandDistance(11, 180)).toBeCloseTo(expected, -1);
		expect(island.inlandDistance(11, -180)).toBeCloseTo(expected, -1);
	});

	it('a cap round the South Pole, open along 180° the way world-atlas stores Antarctica', () => {
		// Edges 1° long, as short as Natural Earth's; the ring ends back at −180° after 179°.
		const ring = Array.from({ length: 361 }, (_, i) => [i === 360 ? -180 : -180 + i, -70]);
		const cap = landMaskFrom(indexOf(ring));
		for (const [lat, lon] of [
			[-90, 0],
			[-89.99, 123],
			[-80, 0],
			[-80, 180],
			[-80, -180],
			[-70.5, 45]
		]) {
			expect(cap.isLand(lat, lon)).toBe(true);
		}
		expect(cap.isLand(-69.5, 0)).toBe(false);
		expect(cap.isLand(0, 0)).toBe(false);
		expect(cap.isLand(90, 0)).toBe(false);
		// The coast runs along the 70°S parallel, so from (80°S, 0°) the nearest coast point is
		// (70°S, 0°), and the cut along 180° is not coast. Far from the coast the nearest edge is
		// chosen on a sphere, whose chords sag a little from the parallel between vertices: allow
		// 0.01 % (about 110 m of 1 116 km).
		const near = (actual: number, expected: number) =>
			expect(Math.abs(actual - expected) / expected).toBeLessThan(1e-4);
		const tenDegrees = geodesicDistance({ lat: -80, lon: 0 }, { lat: -70, lon: 0 });
		near(cap.inlandDistance(-80, 0), tenDegrees);
		near(cap.inlandDistance(-80, 179.99), tenDegrees);
		near(cap.inlandDistance(-90, 0), geodesicDistance({ lat: -90, lon: 0 }, { lat: -70, lon: 0 }));
	});
});

describe('bad input', () => {
	it('a bad threshold is refused before anything loads', async () => {
		await expect(loadLandMask({ inlandMetres: -1 })).rejects.toThrow(RangeError);
		await expect(loadLandMask({ inlandMetres: Number.NaN })).rejects.toThrow(/inlandMetres/);
		expect(() => landMaskFrom(index, { inlandMetres: Infinity })).toThrow(/inlandMetres/);
	});

	it('bad positions get a message naming the problem', () => {
		expect(() => mask.isWellInland(Number.NaN, 0)).toThrow('latitude is not a number');
		expect(() => mask.isWellInland(0, Number.POSITIVE_INFINITY)).toThrow(
			'longitude is not a number'
		);
		expect(() => mask.inlandDistance(91, 0)).toThrow('latitude 91 is outside −90…90');
		expect(() => mask.isLand(0, -180.5)).toThrow('longitude -180.5 is outside −180…180');
	});
});

describe('landFilterFor in cleanTrack', () => {
	it('drops the fix 20 km inland as on_land and keeps the rest, beach fix included', () => {
		const coast = floridaCoast();
		const t0 = Date.UTC(2025, 5, 1);
		const day = 86_400_000;
		const at = (id: string, days: number, p: LatLon): Fix => ({
			id,
			time: t0 + days * day,
			lat: p.lat,
			lon: p.lon,
			lc: '2'
		});
		const fixes = [
			at('sea-1', 0, east(coast, 5_000)),
			at('beach', 1, west(coast, 1_000)),
			at('inland', 2, west(coast, 20_000)),
			at('sea-2', 3, east(coast, 3_000)),
			at('sea-3', 4, east(coast, 8_000))
		];
		const { kept, rejected } = cleanTrack(fixes, { landFilter: landFilterFor(mask) });
		expect(kept.map((f) => f.id)).toEqual(['sea-1', 'beach', 'sea-2', 'sea-3']);
		expect(rejected).toEqual([
			{ fix: fixes[2], reason: 'on_land', detail: 'well inland according to the land mask' }
		]);
		// Without the filter the same track keeps every fix: the drop is the mask's doing.
		expect(cleanTrack(fixes).kept).toHaveLength(5);
	});
});
