import { requireRoles, STAFF_ROLES } from '$lib/server/auth/roles';
import { fakeMode } from '$lib/server/payments/fake';
import { areasFor, STAFF_AREAS } from '$lib/staff-areas';
import type { LayoutServerLoad } from './$types';

// Every page below checks its own roles too: a layout load does not guard form actions.
export const load: LayoutServerLoad = (event) => {
	const user = requireRoles(event, ...STAFF_ROLES);
	// The sandbox drives the local test payment service; with a real key it answers 404.
	const sandbox = fakeMode();
	return {
		areas: areasFor(user.roles)
			.filter((area) => sandbox || area.href !== STAFF_AREAS.sandbox.href)
			.map(({ href, label }) => ({ href, label }))
	};
};
