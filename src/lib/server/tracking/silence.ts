/**
 * "Last signal": a transmitter is silent when no fix has arrived for a set number of days.
 * A transmitter that has never reported (lastFixTime null) is not silent; it has no signal yet,
 * a state callers can tell apart by the null.
 */
export const DAY_MS = 86_400_000;
export const DEFAULT_SILENCE_DAYS = 30;

/**
 * Whole days elapsed since `time` (floored), or null when there is no time. A time slightly in
 * the future (clock skew between the receiver and us) counts as 0 days.
 */
export function daysSince(time: number | null, now: number): number | null {
	if (time === null) return null;
	if (!Number.isFinite(time) || !Number.isFinite(now)) {
		throw new RangeError('daysSince needs finite times');
	}
	return Math.max(0, Math.floor((now - time) / DAY_MS));
}

/** True once at least `days` full days have passed since the last fix. */
export function transmitterSilent(
	lastFixTime: number | null,
	now: number,
	days = DEFAULT_SILENCE_DAYS
): boolean {
	if (!Number.isFinite(days) || days <= 0) throw new RangeError('days must be positive');
	if (lastFixTime === null) return false;
	if (!Number.isFinite(lastFixTime) || !Number.isFinite(now)) {
		throw new RangeError('transmitterSilent needs finite times');
	}
	return now - lastFixTime >= days * DAY_MS;
}
