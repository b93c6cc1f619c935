// Shared by the fake payment pages: they exist only in fake mode, and only while the fake runs.
import { error } from '@sveltejs/kit';
import { fakeMode, runningFakeStripe } from '$lib/server/payments/fake';

export function requireFake(): void {
	if (!fakeMode()) error(404, 'Not found.');
	if (!runningFakeStripe()) error(503, 'The local test payment service is not running.');
}

export function formatMoney(cents: number, currency: string): string {
	return new Intl.NumberFormat('en-US', {
		style: 'currency',
		currency: currency.toUpperCase()
	}).format(cents / 100);
}

/** A date only (UTC), so that server and browser render the same text. */
export function formatDate(unixSeconds: number): string {
	return new Date(unixSeconds * 1000).toISOString().slice(0, 10);
}

export function formatInterval(interval: string | null, count = 1): string {
	if (!interval) return 'one time';
	return count === 1 ? `every ${interval}` : `every ${count} ${interval}s`;
}

export function formText(form: FormData, name: string): string {
	const value = form.get(name);
	return typeof value === 'string' ? value.trim() : '';
}
