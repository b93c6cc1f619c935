import { listLevels } from '$lib/server/adoptions/levels';
import { requireRoles } from '$lib/server/auth/roles';
import { giftQueryProblem } from '$lib/server/ledger/csv';
import { giftQuery, listGifts, parseGiftQuery, patientTotals } from '$lib/server/ledger/gifts';
import { getOrganisationSettings } from '$lib/server/settings';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

const FILTERS = ['from', 'to', 'patient', 'level', 'interval', 'status', 'q'] as const;

// The first page is rendered on the server, so the filters work (and a copied link shows the same
// view) without JavaScript; in the browser the table is refreshed through /api/ledger/gifts.
export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.ledger.roles);
	const params = event.url.searchParams;
	let parsed = parseGiftQuery(params);
	let problem: ReturnType<typeof giftQueryProblem> | null = null;
	if (!parsed.success) {
		// The list is shown without the filters that could not be read; the form says which.
		const bad = giftQueryProblem(parsed.error);
		problem = bad;
		parsed = parseGiftQuery(
			new URLSearchParams([...params].filter(([key]) => !(key in bad.errors)))
		);
	}
	const query = parsed.success ? parsed.data : giftQuery.parse({});
	const [adopted, levels, list, settings] = await Promise.all([
		patientTotals(),
		listLevels(),
		listGifts(query),
		getOrganisationSettings()
	]);
	return {
		options: {
			patients: adopted
				.map((p) => ({ id: p.patientId, name: p.patientName }))
				.sort((a, b) => a.name.localeCompare(b.name, 'en')),
			levels: levels.map((l) => ({ id: l.id, name: l.name }))
		},
		values: Object.fromEntries(FILTERS.map((key) => [key, params.get(key) ?? ''])) as Record<
			(typeof FILTERS)[number],
			string
		>,
		query: { sort: query.sort, dir: query.dir, page: query.page, pageSize: query.pageSize },
		list,
		problem,
		currency: settings.currency
	};
};
