/**
 * Milestone steps along the public distance (PRODUCT.md, "Distances and milestones"): supporters
 * hear each time the public distance crosses a multiple of the step. Step n is reached at
 * exactly n × step metres. The caller stores each step once per patient; these helpers only say
 * which steps a change of distance newly reached.
 */
export const DEFAULT_STEP_METRES = 500_000;

function check(name: string, metres: number): void {
	if (!Number.isFinite(metres) || metres < 0) {
		throw new RangeError(`${name} must be a finite, non-negative distance, got ${metres}`);
	}
}

/** Number of whole steps reached at this distance (0 before the first step). */
export function stepsReached(metres: number, stepMetres = DEFAULT_STEP_METRES): number {
	check('distance', metres);
	if (!Number.isFinite(stepMetres) || stepMetres <= 0) {
		throw new RangeError(`step must be a positive distance, got ${stepMetres}`);
	}
	return Math.floor(metres / stepMetres);
}

/**
 * Step numbers (1-based) newly reached going from `previousMetres` to `currentMetres`, in
 * ascending order. Several steps at once are all listed; a shorter distance (a fix removed by
 * re-cleaning) yields none, since a step once announced is not taken back or repeated.
 */
export function crossedSteps(
	previousMetres: number,
	currentMetres: number,
	stepMetres = DEFAULT_STEP_METRES
): number[] {
	const from = stepsReached(previousMetres, stepMetres);
	const to = stepsReached(currentMetres, stepMetres);
	const steps: number[] = [];
	for (let n = from + 1; n <= to; n++) steps.push(n);
	return steps;
}

/** The highest step newly reached, or null: the one a single supporter update should name. */
export function latestStep(
	previousMetres: number,
	currentMetres: number,
	stepMetres = DEFAULT_STEP_METRES
): number | null {
	const from = stepsReached(previousMetres, stepMetres);
	const to = stepsReached(currentMetres, stepMetres);
	return to > from ? to : null;
}
