// How long a patient has been with us, or home again. Pure: the caller passes "today" so that the
// server and the browser agree on one day and a page never changes between render and hydration.
import type { PatientStatus } from '$lib/server/db/schema';
import { formatDecimal } from './format';
import { isInCare } from './patients';

export type CareDays = { kind: 'in_care' | 'since_release'; days: number } | null;

const DAY_MS = 86_400_000;
const CALENDAR_DAY = /^(\d{4})-(\d{2})-(\d{2})$/;

/** Days since 1970-01-01 for a calendar day 'YYYY-MM-DD', or null when it is not a real day. */
export function dayNumber(day: string): number | null {
	const match = CALENDAR_DAY.exec(day);
	if (!match) return null;
	const [year, month, date] = [Number(match[1]), Number(match[2]), Number(match[3])];
	const ms = Date.UTC(year, month - 1, date);
	const check = new Date(ms);
	// Date.UTC rolls 2026-02-30 over into March; such a day does not exist.
	if (check.getUTCFullYear() !== year || check.getUTCMonth() !== month - 1) return null;
	if (check.getUTCDate() !== date) return null;
	return ms / DAY_MS;
}

/** Today's calendar day in UTC, the clock our stored days are read against. */
export function todayUtc(now: Date = new Date()): string {
	return now.toISOString().slice(0, 10);
}

/**
 * Days in care (from admission) for an animal still at the hospital, days since release for a
 * released one (from the completed release), nothing for the others or when a day is missing.
 * A date after `today` (a clock slightly behind) counts as day 0, never a negative number.
 */
export function careDays(
	patient: { status: PatientStatus; admittedOn: string; releasedOn: string | null },
	today: string
): CareDays {
	const now = dayNumber(today);
	if (now === null) return null;
	const since = (day: string | null) => {
		const start = day === null ? null : dayNumber(day);
		return start === null ? null : Math.max(0, now - start);
	};
	if (patient.status === 'released') {
		const days = since(patient.releasedOn);
		return days === null ? null : { kind: 'since_release', days };
	}
	if (isInCare(patient.status)) {
		const days = since(patient.admittedOn);
		return days === null ? null : { kind: 'in_care', days };
	}
	return null;
}

/** "12 days in care", "Released yesterday", … for cards and profiles. */
export function describeCareDays(value: CareDays): string | null {
	if (value === null) return null;
	const n = value.days;
	if (value.kind === 'in_care') {
		if (n === 0) return 'Admitted today';
		return `${formatDecimal(n)} ${n === 1 ? 'day' : 'days'} in care`;
	}
	if (n === 0) return 'Released today';
	return `${formatDecimal(n)} ${n === 1 ? 'day' : 'days'} since release`;
}
