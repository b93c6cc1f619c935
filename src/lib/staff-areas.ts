import type { Role } from './roles';

/** The staff areas and who may enter each: the navigation and each area's server check use it. */
export const STAFF_AREAS = {
	newsroom: { href: '/staff/newsroom', label: 'Newsroom', roles: ['educator', 'admin'] },
	tracking: { href: '/staff/tracking', label: 'Tracking desk', roles: ['tracker', 'admin'] },
	ledger: { href: '/staff/ledger', label: 'Ledger', roles: ['development', 'admin'] },
	users: { href: '/staff/users', label: 'People and roles', roles: ['admin'] },
	settings: { href: '/staff/settings', label: 'Settings', roles: ['admin'] },
	audit: { href: '/staff/audit', label: 'Audit log', roles: ['admin'] },
	mail: { href: '/staff/mail', label: 'Caught mail', roles: ['admin'] },
	outbox: { href: '/staff/outbox', label: 'Outbox', roles: ['admin', 'development'] },
	/** Controls for the local test payment service; listed only in fake mode (no real key). */
	sandbox: { href: '/staff/sandbox', label: 'Payment sandbox', roles: ['admin'] }
} as const satisfies Record<string, { href: string; label: string; roles: readonly Role[] }>;

export type StaffArea = keyof typeof STAFF_AREAS;

export function areasFor(roles: readonly Role[]) {
	return Object.values(STAFF_AREAS).filter((area) =>
		(area.roles as readonly Role[]).some((r) => roles.includes(r))
	);
}
