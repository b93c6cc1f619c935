/**
 * Darwin Core fields for the generalised (public) positions.
 *
 * The grid itself follows Chapman 2020, "Current Best Practices for Generalizing Sensitive
 * Species Occurrence Data", GBIF, doi:10.15468/doc-5jp4-5g10, Table 6: generalise to a fixed
 * 0.1° (~10 km) grid or coarser, and record what was done in `dataGeneralizations`.
 */
import { geodesicDistance } from './geodesy';

/**
 * Darwin Core `coordinateUncertaintyInMeters` for a position published as the centre of a
 * `cellDeg` × `cellDeg` cell: "the horizontal distance from the given coordinates describing the
 * smallest circle containing the whole of the Location". The circle is centred on the published
 * coordinate (the cell centre), so its radius is the geodesic distance (WGS84) from the centre to
 * the farthest corner of the cell (the corners on the equator side, whose parallel is longer),
 * rounded up to whole metres so the circle never falls short. Zero is not a valid value; a
 * positive cell always gives at least 1.
 */
export function coordinateUncertaintyInMeters(latCellCentre: number, cellDeg: number): number {
	if (!Number.isFinite(latCellCentre) || latCellCentre < -90 || latCellCentre > 90) {
		throw new RangeError(`latitude out of range: ${latCellCentre}`);
	}
	if (!Number.isFinite(cellDeg) || cellDeg <= 0 || cellDeg > 180) {
		throw new RangeError(`cell size must be in (0°, 180°], got ${cellDeg}`);
	}
	const half = cellDeg / 2;
	const centre = { lat: latCellCentre, lon: 0 };
	// By symmetry in longitude only the two corner latitudes matter.
	const south = Math.max(latCellCentre - half, -90);
	const north = Math.min(latCellCentre + half, 90);
	const radius = Math.max(
		geodesicDistance(centre, { lat: south, lon: half }),
		geodesicDistance(centre, { lat: north, lon: half })
	);
	return Math.max(1, Math.ceil(radius));
}

function formatDegrees(cellDeg: number): string {
	return `${Number(cellDeg.toFixed(6))}°`;
}

/** Darwin Core `dataGeneralizations`: what was done to the positions before publication. */
export function dataGeneralizations(cellDeg: number, delayDays: number): string {
	const cell = formatDegrees(cellDeg);
	const days = delayDays === 1 ? '1 day' : `${delayDays} days`;
	return (
		`Coordinates generalised to the centre of a ${cell} × ${cell} latitude/longitude grid cell ` +
		`(fixed grid anchored at 90°S, 180°W); consecutive positions in the same cell merged; ` +
		`dates given to the day (UTC), times withheld; positions published no sooner than ` +
		`${days} after they were recorded.`
	);
}
