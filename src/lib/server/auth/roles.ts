import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import type { Role } from '../db/schema';
import type { SessionUser } from './lucia';

export const STAFF_ROLES: readonly Role[] = ['educator', 'tracker', 'development', 'admin'];

export function hasAnyRole(user: SessionUser | null, roles: readonly Role[]): boolean {
	if (!user) return false;
	return roles.length === 0 || user.roles.some((r) => roles.includes(r));
}

export function isStaff(user: SessionUser | null): boolean {
	return hasAnyRole(user, STAFF_ROLES);
}

type EventLike = Pick<RequestEvent, 'locals' | 'url' | 'request'>;

/**
 * The one server-side gate for staff pages, account pages and API endpoints. Call it first in
 * every load, action and endpoint that is not public; the route-coverage test checks that you
 * did. With no roles given it only requires a signed-in user. Pages send a visitor to sign in;
 * API calls (and non-GET requests) get a plain 401/403.
 */
export function requireRoles(event: EventLike, ...roles: Role[]): SessionUser {
	const user = event.locals.user;
	const wantsPage = event.request.method === 'GET' && !event.url.pathname.startsWith('/api/');
	if (!user) {
		if (wantsPage) {
			const back = event.url.pathname + event.url.search;
			redirect(303, `/signin?redirectTo=${encodeURIComponent(back)}`);
		}
		error(401, 'Please sign in first.');
	}
	if (!hasAnyRole(user, roles)) {
		error(403, 'Your account does not have access to this area.');
	}
	return user;
}
