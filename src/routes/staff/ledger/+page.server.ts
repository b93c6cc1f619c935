import { requireRoles } from '$lib/server/auth/roles';
import { patientTotals } from '$lib/server/ledger/gifts';
import { formatCents } from '$lib/server/ledger/receipts/us';
import { getOrganisationSettings } from '$lib/server/settings';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const [totals, settings] = await Promise.all([patientTotals(), getOrganisationSettings()]);
	const currency = settings.currency.toUpperCase();
	return {
		patients: totals.map((p) => ({
			id: p.patientId,
			name: p.patientName,
			activeAdoptions: p.activeAdoptions,
			adoptions: p.adoptions,
			given: formatCents(p.giftCents, currency)
		}))
	};
};
