/**
 * Land mask for track cleaning: a fix on land and farther than `inlandMetres` (default 5 km)
 * from the nearest coastline is "well inland" and is dropped; fixes near the coast are kept,
 * because a turtle on a beach or in a lagoon is real and Argos errors run to kilometres.
 *
 * Land is Natural Earth 1:10m land (version 4.1.0), as redistributed by the world-atlas package
 * (TopoJSON, read from node_modules at run time, not bundled). Natural Earth edges are straight
 * lines in longitude/latitude, so inside/outside is decided in that plane, exactly as the data
 * means it. world-atlas joins the pieces that Natural Earth cuts at 180°, which leaves two
 * kinds of ring that a plane test would get wrong; both are repaired once at build time:
 *  - rings that jump across 180° (Chukotka, Wrangel Island, Taveuni): longitudes are unwrapped
 *    along the ring, and a copy shifted by 360° is added for the part beyond ±180°;
 *  - Antarctica, which goes once round the pole: it is closed along ±180° and the pole itself.
 * Edges along 180° and along the pole are not coastline: they bound inside/outside in the plane
 * but never count as coast for the distance.
 *
 * Index: a grid of `cellDegrees` cells. For each cell, the state of its centre (land or sea,
 * by one scan per row at build time) and the coastline edges that touch it. A point in a cell
 * without coastline has the state of the centre; otherwise the coast edges crossed on the way
 * from the point to the centre flip it. Distances look only at the cells within the search
 * radius, so a query at sea or deep inland costs a few array reads.
 *
 * Distances: for searches up to 100 km within ±85° of latitude (every `isWellInland` at the
 * default threshold away from the poles), coast vertices are placed in a `LocalPlane` around
 * the query point; otherwise on a `LocalSphere`, searched outward from the point's cell until
 * no nearer cell can exist. The nearest point found is then measured with geographiclib
 * (`geodesicDistance`), and near the threshold that geodesic value decides, so `isWellInland`
 * and `inlandDistance` agree. The plane is within 0.001 % of the geodesic at 5 km and 0.2 % at
 * 100 km, the sphere within 0.5 % at any distance (landmask.test.ts). Far inland the nearest
 * edge is chosen on the sphere, so `inlandDistance` there is the geodesic distance to a coast
 * point within about 0.5 % of the nearest.
 */
import { readFile } from 'node:fs/promises';
import { createRequire } from 'node:module';
import { feature } from 'topojson-client';
import type { Topology } from 'topojson-specification';
import { geodesicDistance } from './geodesy';

export const DEFAULT_INLAND_METRES = 5_000;
/** Grid cell size of the index; at 0.25° a cell with coast holds about 12 edges of the 10m data. */
export const DEFAULT_CELL_DEGREES = 0.25;

export interface LandMask {
	/** the distance from the coast beyond which land counts as well inland, metres */
	readonly inlandMetres: number;
	/** true when (lat, lon) is on land AND farther than inlandMetres from the nearest coastline */
	isWellInland(lat: number, lon: number): boolean;
	/** distance in metres from the point to the nearest coastline when on land, 0 at sea */
	inlandDistance(lat: number, lon: number): number;
	/** true when (lat, lon) is inside a land polygon, however close to the coast */
	isLand(lat: number, lon: number): boolean;
}

export interface LandMaskOptions {
	/** metres from the coast beyond which a fix on land is removed (default 5 000) */
	inlandMetres?: number;
}

// WGS84, as in geodesy.ts.
const A = 6378137;
const F = 1 / 298.257223563;
const E2 = F * (2 - F);
const RAD = Math.PI / 180;
/** The smallest meridional radius of curvature (at the equator), for conservative search boxes. */
const M_MIN = A * (1 - E2);
/**
 * A distance estimate decides only when it is farther than this (relative) from the
 * threshold; in between, the geodesic decides. The largest errors measured in landmask.test.ts
 * are about 0.002 for the plane within its limits and 0.004 for the sphere.
 */
const DISTANCE_TOLERANCE = 0.01;
const PAD_M = 1;
/** The plane is used only for searches this short that stay within this latitude. */
const PLANE_MAX_METRES = 100_000;
const PLANE_MAX_LAT = 85;
/** `inlandDistance` looks this far in the plane before searching the whole sphere. */
const NEAR_SEARCH_METRES = 50_000;

/**
 * A local plane around one point, in metres: y north along the meridian, x east along the
 * parallel at the mean latitude of the two points. Good to well under 0.1 % within tens of
 * kilometres, away from the poles; it does not know that longitudes meet at a pole.
 */
export class LocalPlane {
	readonly cosLat: number;
	readonly sinLat: number;
	/** metres per degree of latitude and of longitude (before the cosine) at the origin */
	readonly mPerDegLat: number;
	readonly mPerDegLon: number;

	constructor(
		readonly lat: number,
		readonly lon: number
	) {
		const phi = lat * RAD;
		this.sinLat = Math.sin(phi);
		this.cosLat = Math.cos(phi);
		const w = 1 - E2 * this.sinLat * this.sinLat;
		this.mPerDegLat = ((A * (1 - E2)) / (w * Math.sqrt(w))) * RAD;
		this.mPerDegLon = (A / Math.sqrt(w)) * RAD;
	}

	y(lat: number): number {
		return (lat - this.lat) * this.mPerDegLat;
	}

	x(lat: number, lon: number): number {
		let dLon = lon - this.lon;
		if (dLon > 180) dLon -= 360;
		else if (dLon < -180) dLon += 360;
		if (dLon > 180) dLon -= 360;
		else if (dLon < -180) dLon += 360;
		const half = (lat - this.lat) * RAD * 0.5;
		// cos(φ + h) by its Taylor series while h is small: no Math.cos in the common case.
		const cosMid =
			half < 0.1 && half > -0.1
				? this.cosLat * (1 - (half * half) / 2) - this.sinLat * half * (1 - (half * half) / 6)
				: Math.cos(this.lat * RAD + half);
		return dLon * this.mPerDegLon * cosMid;
	}

	distance(lat: number, lon: number): number {
		return Math.hypot(this.x(lat, lon), this.y(lat));
	}
}

/**
 * A sphere touching the ellipsoid at one point (radius √(MN), the Gaussian radius there):
 * right at any scale and at the poles, within about 0.4 % of the geodesic.
 */
export class LocalSphere {
	/** unit vector of the origin */
	readonly px: number;
	readonly py: number;
	readonly pz: number;
	readonly radius: number;

	constructor(
		readonly lat: number,
		readonly lon: number
	) {
		const phi = lat * RAD;
		const lambda = lon * RAD;
		this.px = Math.cos(phi) * Math.cos(lambda);
		this.py = Math.cos(phi) * Math.sin(lambda);
		this.pz = Math.sin(phi);
		const w = 1 - E2 * this.pz * this.pz;
		this.radius = (A * Math.sqrt(1 - E2)) / w;
	}

	distance(lat: number, lon: number): number {
		const phi = lat * RAD;
		const lambda = lon * RAD;
		const dx = Math.cos(phi) * Math.cos(lambda) - this.px;
		const dy = Math.cos(phi) * Math.sin(lambda) - this.py;
		const dz = Math.sin(phi) - this.pz;
		return 2 * Math.asin(Math.min(1, Math.hypot(dx, dy, dz) / 2)) * this.radius;
	}
}

/** Squared chord of the unit sphere for a central angle. */
function chord2(angle: number): number {
	const half = Math.sin(angle / 2);
	return 4 * half * half;
}

interface CellBox {
	r0: number;
	r1: number;
	/** may run past either end: columns wrap round */
	c0: number;
	c1: number;
}

interface SphereBest {
	/** central angle and squared unit chord of the best edge so far */
	angle: number;
	chord2: number;
	/** its entry offset (−1: none yet) and the position along it */
	k: number;
	t: number;
	/** stop as soon as the angle is below this */
	stopAngle: number;
}

interface NearestCoast {
	/** distance in the plane or on the sphere, metres */
	estimate: number;
	/** the nearest point of the nearest coast edge */
	lat: number;
	lon: number;
}

/** The polygons and their grid index; heavy to build, shared by every LandMask. */
export class LandIndex {
	readonly cols: number;
	readonly rows: number;
	/** cell centre state: 1 = land */
	private readonly state: Uint8Array;
	/** cell c's coast edges are entries cellStart[c] … cellStart[c + 1] − 1 */
	private readonly cellStart: Int32Array;
	/** per entry: lon1, lat1, lon2, lat2 (one copy per cell, so a cell's edges are contiguous) */
	private readonly entries: Float64Array;
	/** 1 when the row of cells holds any coast edge */
	private readonly rowHasCoast: Uint8Array;
	/** sin of the smallest longitude gap to a cell dc columns away (capped at 90°), by dc */
	private readonly sinColumnGap: Float64Array;
	readonly stats: { rings: number; edges: number; coastEdges: number; coastCells: number };

	constructor(
		topology: Topology,
		objectName = 'land',
		readonly cellDegrees = DEFAULT_CELL_DEGREES
	) {
		const cols = Math.round(360 / cellDegrees);
		const rows = Math.round(180 / cellDegrees);
		if (!(cellDegrees > 0) || Math.abs(cols * cellDegrees - 360) > 1e-9 || rows * 2 !== cols) {
			throw new RangeError(`cellDegrees must divide 180 evenly, got ${cellDegrees}`);
		}
		const object = topology.objects[objectName];
		if (!object) throw new Error(`the topology has no object "${objectName}"`);
		this.cols = cols;
		this.rows = rows;

		const rings = planarRings(topology, object);
		let edgeCount = 0;
		for (const ring of rings) edgeCount += ring.coast.length;

		// Inside/outside of every cell centre: one horizontal line per row, counting the edges
		// it crosses west of each centre. Every edge counts here, coast or not.
		const crossCount = new Int32Array(rows + 1);
		const forEachRowCrossing = (visit: (row: number, lon: number) => void) => {
			for (const { xs, ys } of rings) {
				for (let i = 0; i + 1 < xs.length; i++) {
					const y1 = ys[i];
					const y2 = ys[i + 1];
					if (y1 === y2) continue;
					const lo = Math.min(y1, y2);
					const hi = Math.max(y1, y2);
					// Rows whose centre line cy has (y1 > cy) !== (y2 > cy), i.e. lo <= cy < hi.
					const first = Math.max(0, Math.ceil((lo + 90) / cellDegrees - 0.5) - 1);
					for (let row = first; row < rows; row++) {
						const cy = -90 + (row + 0.5) * cellDegrees;
						if (cy >= hi) break;
						if (cy < lo) continue;
						visit(row, xs[i] + ((cy - y1) * (xs[i + 1] - xs[i])) / (y2 - y1));
					}
				}
			}
		};
		forEachRowCrossing((row) => crossCount[row + 1]++);
		for (let r = 0; r < rows; r++) crossCount[r + 1] += crossCount[r];
		const crossings = new Float64Array(crossCount[rows]);
		const fill = crossCount.slice(0, rows);
		forEachRowCrossing((row, lon) => (crossings[fill[row]++] = lon));
		const state = new Uint8Array(rows * cols);
		for (let r = 0; r < rows; r++) {
			const xs = crossings.subarray(crossCount[r], crossCount[r + 1]).sort();
			let k = 0;
			for (let c = 0; c < cols; c++) {
				const cx = -180 + (c + 0.5) * cellDegrees;
				while (k < xs.length && xs[k] <= cx) k++;
				state[r * cols + c] = k & 1;
			}
		}

		// Coast edges into every cell their bounding box touches.
		const cells = rows * cols;
		const cellStart = new Int32Array(cells + 1);
		const forEachCoastCell = (visit: (cell: number, ring: PlanarRing, i: number) => void) => {
			for (const ring of rings) {
				const { xs, ys, coast } = ring;
				for (let i = 0; i < coast.length; i++) {
					if (!coast[i]) continue;
					const minX = Math.min(xs[i], xs[i + 1]);
					const maxX = Math.max(xs[i], xs[i + 1]);
					if (maxX < -180 || minX >= 180) continue;
					const c0 = this.col(Math.max(minX, -180));
					const c1 = this.col(Math.min(maxX, 180));
					const r0 = this.row(Math.min(ys[i], ys[i + 1]));
					const r1 = this.row(Math.max(ys[i], ys[i + 1]));
					for (let r = r0; r <= r1; r++) {
						for (let c = c0; c <= c1; c++) visit(r * cols + c, ring, i);
					}
				}
			}
		};
		forEachCoastCell((cell) => cellStart[cell + 1]++);
		let coastCells = 0;
		for (let c = 0; c < cells; c++) {
			if (cellStart[c + 1] > 0) coastCells++;
			cellStart[c + 1] += cellStart[c];
		}
		const entries = new Float64Array(cellStart[cells] * 4);
		const at = cellStart.slice(0, cells);
		let coastEdges = 0;
		for (const ring of rings) for (const flag of ring.coast) coastEdges += flag;
		forEachCoastCell((cell, { xs, ys }, i) => {
			const e = 4 * at[cell]++;
			entries[e] = xs[i];
			entries[e + 1] = ys[i];
			entries[e + 2] = xs[i + 1];
			entries[e + 3] = ys[i + 1];
		});

		const rowHasCoast = new Uint8Array(rows);
		for (let r = 0; r < rows; r++) {
			rowHasCoast[r] = cellStart[(r + 1) * cols] > cellStart[r * cols] ? 1 : 0;
		}
		const sinColumnGap = new Float64Array((cols >> 1) + 1);
		for (let dc = 0; dc < sinColumnGap.length; dc++) {
			sinColumnGap[dc] = Math.sin(Math.min(90, Math.max(0, dc - 1) * cellDegrees) * RAD);
		}

		this.rowHasCoast = rowHasCoast;
		this.sinColumnGap = sinColumnGap;
		this.state = state;
		this.cellStart = cellStart;
		this.entries = entries;
		this.stats = { rings: rings.length, edges: edgeCount, coastEdges, coastCells };
	}

	/** Bytes held by the index's arrays. */
	get bytes(): number {
		return this.state.byteLength + this.cellStart.byteLength + this.entries.byteLength;
	}

	private col(lon: number): number {
		return Math.min(this.cols - 1, Math.max(0, Math.floor((lon + 180) / this.cellDegrees)));
	}

	private row(lat: number): number {
		return Math.min(this.rows - 1, Math.max(0, Math.floor((lat + 90) / this.cellDegrees)));
	}

	/** Expects a checked point (see `checkPoint`). */
	isLand(lat: number, lon: number): boolean {
		const row = this.row(lat);
		const col = this.col(lon);
		const cell = row * this.cols + col;
		let inside = this.state[cell];
		const start = this.cellStart[cell];
		const end = this.cellStart[cell + 1];
		if (start === end) return inside === 1;
		// Walk from the point to the cell centre: east-west at the point's latitude, then
		// north-south along the centre's meridian; every coast edge crossed flips the state.
		// The half-open comparisons match the row scan that set the centre's state.
		const cx = -180 + (col + 0.5) * this.cellDegrees;
		const cy = -90 + (row + 0.5) * this.cellDegrees;
		const e = this.entries;
		for (let k = 4 * start, stop = 4 * end; k < stop; k += 4) {
			const x1 = e[k];
			const y1 = e[k + 1];
			const x2 = e[k + 2];
			const y2 = e[k + 3];
			if (y1 > lat !== y2 > lat) {
				const xi = x1 + ((lat - y1) * (x2 - x1)) / (y2 - y1);
				if (xi > lon !== xi > cx) inside ^= 1;
			}
			if (x1 > cx !== x2 > cx) {
				const yi = y1 + ((cx - x1) * (y2 - y1)) / (x2 - x1);
				if (yi > lat !== yi > cy) inside ^= 1;
			}
		}
		return inside === 1;
	}

	/**
	 * The coast edge nearest to the point, among those that may lie within `radiusMetres`;
	 * null when there is none that close. Stops at the first edge nearer than `stopBelow`.
	 * Short searches away from the poles measure in a `LocalPlane`, the rest on a `LocalSphere`.
	 */
	nearestCoast(lat: number, lon: number, radiusMetres: number, stopBelow = 0): NearestCoast | null {
		// A geodesic of length s moves at most s / M_MIN radians in latitude and, along the way,
		// at most s / (A cos φ) in longitude, φ being the latitude farthest from the equator.
		const reach = radiusMetres * (1 + 2 * DISTANCE_TOLERANCE) + PAD_M;
		const dLat = reach / M_MIN / RAD;
		const south = lat - dLat;
		const north = lat + dLat;
		const box: CellBox = { r0: this.row(south), r1: this.row(north), c0: 0, c1: this.cols - 1 };
		if (south > -90 && north < 90) {
			const farthest = Math.max(Math.abs(south), Math.abs(north));
			const dLon = reach / (A * Math.cos(farthest * RAD)) / RAD;
			const c0 = Math.floor((lon - dLon + 180) / this.cellDegrees);
			const c1 = Math.floor((lon + dLon + 180) / this.cellDegrees);
			if (c1 - c0 < this.cols) {
				box.c0 = c0;
				box.c1 = c1;
			}
		}
		const limit = radiusMetres * (1 + DISTANCE_TOLERANCE) + PAD_M;
		return reach <= PLANE_MAX_METRES && Math.max(-south, north) <= PLANE_MAX_LAT
			? this.nearestInPlane(new LocalPlane(lat, lon), box, limit, stopBelow)
			: this.nearestOnSphere(new LocalSphere(lat, lon), limit, stopBelow);
	}

	private cellIndex(r: number, c: number): number {
		return r * this.cols + (((c % this.cols) + this.cols) % this.cols);
	}

	private nearestInPlane(
		plane: LocalPlane,
		box: CellBox,
		limit: number,
		stopBelow: number
	): NearestCoast | null {
		let best = limit;
		let best2 = best * best;
		let bestK = -1;
		let bestT = 0;
		const e = this.entries;
		for (let r = box.r0; r <= box.r1; r++) {
			for (let c = box.c0; c <= box.c1; c++) {
				const cell = this.cellIndex(r, c);
				const stop = 4 * this.cellStart[cell + 1];
				for (let k = 4 * this.cellStart[cell]; k < stop; k += 4) {
					const ay = plane.y(e[k + 1]);
					const by = plane.y(e[k + 3]);
					if ((ay > best && by > best) || (ay < -best && by < -best)) continue;
					const ax = plane.x(e[k + 1], e[k]);
					const bx = plane.x(e[k + 3], e[k + 2]);
					const dx = bx - ax;
					const dy = by - ay;
					const len2 = dx * dx + dy * dy;
					let t = len2 > 0 ? -(ax * dx + ay * dy) / len2 : 0;
					t = t < 0 ? 0 : t > 1 ? 1 : t;
					const px = ax + t * dx;
					const py = ay + t * dy;
					const d2 = px * px + py * py;
					if (d2 < best2) {
						best2 = d2;
						best = Math.sqrt(d2);
						bestK = k;
						bestT = t;
						if (best < stopBelow) return this.coastPoint(best, k, t);
					}
				}
			}
		}
		return bestK < 0 ? null : this.coastPoint(best, bestK, bestT);
	}

	/**
	 * Rows outward from the point's row, and within a row cells outward from its column, so
	 * that the best distance shrinks early; a row or cell is skipped once a lower bound of its
	 * distance (difference in latitude; distance to the nearest meridian of the cell) exceeds
	 * the best so far. No box needed: the bounds stop the search.
	 */
	private nearestOnSphere(
		sphere: LocalSphere,
		limit: number,
		stopBelow: number
	): NearestCoast | null {
		const best: SphereBest = {
			angle: Math.min(Math.PI, limit / sphere.radius),
			chord2: 0,
			k: -1,
			t: 0,
			stopAngle: stopBelow / sphere.radius
		};
		best.chord2 = chord2(best.angle);
		const lat = sphere.lat;
		const cosLat = Math.cos(lat * RAD);
		const homeRow = this.row(lat);
		const homeCol = this.col(sphere.lon);
		const half = this.cols >> 1;
		const cs = this.cellDegrees;
		for (const step of [1, -1]) {
			for (let r = step > 0 ? homeRow : homeRow - 1; r >= 0 && r < this.rows; r += step) {
				const south = -90 + r * cs;
				const gap = lat < south ? south - lat : lat > south + cs ? lat - south - cs : 0;
				if (gap * RAD > best.angle) break;
				if (!this.rowHasCoast[r]) continue;
				for (let dc = 0; dc <= half; dc++) {
					// Every point of a cell dc columns away is at least (dc − 1) cells of
					// longitude away, so at least this far from the query point.
					const sinAngle = best.angle < Math.PI / 2 ? Math.sin(best.angle) : Infinity;
					if (cosLat * this.sinColumnGap[dc] > sinAngle) break;
					const stop =
						this.scanOnSphere(sphere, this.cellIndex(r, homeCol + dc), best) ||
						(dc > 0 &&
							dc < half &&
							this.scanOnSphere(sphere, this.cellIndex(r, homeCol - dc), best));
					if (stop) return this.coastPoint(best.angle * sphere.radius, best.k, best.t);
				}
			}
		}
		return best.k < 0 ? null : this.coastPoint(best.angle * sphere.radius, best.k, best.t);
	}

	/** Scans one cell's coast edges on the sphere; true when the search can stop. */
	private scanOnSphere(sphere: LocalSphere, cell: number, best: SphereBest): boolean {
		const { px, py, pz } = sphere;
		const phi = sphere.lat * RAD;
		const e = this.entries;
		const stop = 4 * this.cellStart[cell + 1];
		for (let k = 4 * this.cellStart[cell]; k < stop; k += 4) {
			// The angle to a point is at least the difference in latitude.
			const phi1 = e[k + 1] * RAD;
			const phi2 = e[k + 3] * RAD;
			if (phi1 - phi > best.angle && phi2 - phi > best.angle) continue;
			if (phi - phi1 > best.angle && phi - phi2 > best.angle) continue;
			const cos1 = Math.cos(phi1);
			const ax = cos1 * Math.cos(e[k] * RAD);
			const ay = cos1 * Math.sin(e[k] * RAD);
			const az = Math.sin(phi1);
			const cos2 = Math.cos(phi2);
			const dx = cos2 * Math.cos(e[k + 2] * RAD) - ax;
			const dy = cos2 * Math.sin(e[k + 2] * RAD) - ay;
			const dz = Math.sin(phi2) - az;
			const len2 = dx * dx + dy * dy + dz * dz;
			let t = len2 > 0 ? ((px - ax) * dx + (py - ay) * dy + (pz - az) * dz) / len2 : 0;
			t = t < 0 ? 0 : t > 1 ? 1 : t;
			const qx = px - ax - t * dx;
			const qy = py - ay - t * dy;
			const qz = pz - az - t * dz;
			const c2 = qx * qx + qy * qy + qz * qz;
			if (c2 < best.chord2) {
				best.chord2 = c2;
				best.angle = 2 * Math.asin(Math.min(1, Math.sqrt(c2) / 2));
				best.k = k;
				best.t = t;
				if (best.angle < best.stopAngle) return true;
			}
		}
		return false;
	}

	private coastPoint(estimate: number, k: number, t: number): NearestCoast {
		const e = this.entries;
		let lon = e[k] + t * (e[k + 2] - e[k]);
		if (lon >= 180) lon -= 360;
		else if (lon < -180) lon += 360;
		return { estimate, lat: e[k + 1] + t * (e[k + 3] - e[k + 1]), lon };
	}
}

interface PlanarRing {
	/** unwrapped longitudes; the last vertex repeats the first */
	xs: number[];
	ys: number[];
	/** per edge i (vertex i to i + 1): 1 = real coastline, 0 = a cut along 180° or the pole */
	coast: Uint8Array;
}

function planarRings(topology: Topology, object: Topology['objects'][string]): PlanarRing[] {
	const geo = feature(topology, object);
	const geometries = 'features' in geo ? geo.features.map((f) => f.geometry) : [geo.geometry];
	const out: PlanarRing[] = [];
	for (const geometry of geometries) {
		if (!geometry) continue;
		const polygons =
			geometry.type === 'Polygon'
				? [geometry.coordinates]
				: geometry.type === 'MultiPolygon'
					? geometry.coordinates
					: [];
		for (const polygon of polygons) {
			for (const ring of polygon) {
				if (ring.length >= 4) out.push(...planarRing(ring));
			}
		}
	}
	return out;
}

const onCut = (lon: number) => Math.abs(lon) % 360 === 180;

/** One GeoJSON ring as one or more closed plane rings (see the module comment). */
function planarRing(ring: number[][]): PlanarRing[] {
	const xs: number[] = [];
	const ys: number[] = [];
	let shift = 0;
	for (let i = 0; i < ring.length; i++) {
		const [lon, lat] = ring[i];
		if (i > 0) {
			const step = lon + shift - xs[i - 1];
			if (step > 180) shift -= 360;
			else if (step < -180) shift += 360;
		}
		xs.push(lon + shift);
		ys.push(lat);
	}
	const n = xs.length;
	if (xs[n - 1] !== xs[0]) {
		// Once round a pole: close along the two cut meridians and the pole's own latitude.
		let latSum = 0;
		for (const y of ys) latSum += y;
		const pole = latSum < 0 ? -90 : 90;
		xs.push(xs[n - 1], xs[0], xs[0]);
		ys.push(pole, pole, ys[0]);
	}
	const coast = new Uint8Array(xs.length - 1);
	for (let i = 0; i < coast.length; i++) {
		const artificial = i >= n - 1 || (onCut(xs[i]) && onCut(xs[i + 1]));
		coast[i] = artificial ? 0 : 1;
	}
	const rings: PlanarRing[] = [{ xs, ys, coast }];
	let minX = Infinity;
	let maxX = -Infinity;
	for (const x of xs) {
		if (x < minX) minX = x;
		if (x > maxX) maxX = x;
	}
	if (maxX - minX < 360) {
		if (maxX > 180) rings.push({ xs: xs.map((x) => x - 360), ys, coast });
		if (minX < -180) rings.push({ xs: xs.map((x) => x + 360), ys, coast });
	}
	return rings;
}

/** Throws a RangeError naming the problem when (lat, lon) is not a usable position. */
function checkPoint(lat: number, lon: number): void {
	if (typeof lat !== 'number' || !Number.isFinite(lat))
		throw new RangeError('latitude is not a number');
	if (typeof lon !== 'number' || !Number.isFinite(lon))
		throw new RangeError('longitude is not a number');
	if (Math.abs(lat) > 90) throw new RangeError(`latitude ${lat} is outside −90…90`);
	if (Math.abs(lon) > 180) throw new RangeError(`longitude ${lon} is outside −180…180`);
}

/** 180° is −180°, and at a pole every longitude is the same point. */
function canonicalLon(lat: number, lon: number): number {
	if (Math.abs(lat) === 90) return 0;
	return lon === 180 ? -180 : lon;
}

function checkedInlandMetres(options: LandMaskOptions): number {
	const metres = options.inlandMetres ?? DEFAULT_INLAND_METRES;
	if (typeof metres !== 'number' || !Number.isFinite(metres) || metres < 0) {
		throw new RangeError(`inlandMetres must be a number of metres ≥ 0, got ${String(metres)}`);
	}
	return metres;
}

/** A LandMask over an index; cheap, so one per threshold is fine. */
export function landMaskFrom(index: LandIndex, options: LandMaskOptions = {}): LandMask {
	const inlandMetres = checkedInlandMetres(options);

	const geodesicTo = (lat: number, lon: number, near: NearestCoast) =>
		geodesicDistance({ lat, lon }, near);

	const isLand = (lat: number, lon: number) => {
		checkPoint(lat, lon);
		return index.isLand(lat, canonicalLon(lat, lon));
	};

	return {
		inlandMetres,
		isLand,
		isWellInland(lat, lon) {
			checkPoint(lat, lon);
			lon = canonicalLon(lat, lon);
			if (!index.isLand(lat, lon)) return false;
			const surelyNear = inlandMetres * (1 - DISTANCE_TOLERANCE) - PAD_M;
			const near = index.nearestCoast(lat, lon, inlandMetres, surelyNear);
			if (!near) return true;
			if (near.estimate < surelyNear) return false;
			return geodesicTo(lat, lon, near) > inlandMetres;
		},
		inlandDistance(lat, lon) {
			checkPoint(lat, lon);
			lon = canonicalLon(lat, lon);
			if (!index.isLand(lat, lon)) return 0;
			// Most points on land are near a coast: a short search first, then the whole world.
			const near =
				index.nearestCoast(lat, lon, NEAR_SEARCH_METRES) ?? index.nearestCoast(lat, lon, Infinity);
			if (!near) throw new Error('the land mask has no coastline');
			return geodesicTo(lat, lon, near);
		}
	};
}

/** `landFilter` for `cleanTrack`: true when the fix is well inland and must go. */
export function landFilterFor(mask: LandMask): (fix: { lat: number; lon: number }) => boolean {
	return (fix) => mask.isWellInland(fix.lat, fix.lon);
}

let shared: Promise<LandIndex> | undefined;

/** Natural Earth 1:10m land from world-atlas, read from node_modules (not bundled). */
export async function loadLandIndex(): Promise<LandIndex> {
	// One index per process: it is read-only, the same for every request, and costly to build.
	const pending = (shared ??= (async () => {
		const path = createRequire(import.meta.url).resolve('world-atlas/land-10m.json');
		const topology = JSON.parse(await readFile(path, 'utf8')) as Topology;
		return new LandIndex(topology, 'land');
	})());
	try {
		return await pending;
	} catch (error) {
		if (shared === pending) shared = undefined; // let a later call try again
		throw error;
	}
}

/** The land mask at a threshold (default 5 km); the index behind it is built once per process. */
export async function loadLandMask(options: LandMaskOptions = {}): Promise<LandMask> {
	// Check the options before the (first, slow) load so bad input fails at once.
	checkedInlandMetres(options);
	return landMaskFrom(await loadLandIndex(), options);
}
