import { fail } from '@sveltejs/kit';
import { z } from 'zod';
import {
	centsToDollars,
	createLevel,
	deleteLevel,
	LevelRefused,
	levelForm,
	listLevels,
	moveLevel,
	setLevelActive,
	updateLevel
} from '$lib/server/adoptions/levels';
import { MAX_AMOUNT_CENTS, MIN_AMOUNT_CENTS } from '$lib/server/adoptions/form';
import { requireRoles } from '$lib/server/auth/roles';
import { parseForm } from '$lib/server/forms';
import { formatCents } from '$lib/server/ledger/receipts/us';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.ledger.roles;

type LevelForm = 'create' | 'update' | 'move' | 'retire' | 'restore' | 'delete';

const levelRef = z.object({
	levelId: z.string({ error: 'Choose a level from the list.' }).trim().min(1, 'Choose a level.')
});

const moveForm = levelRef.extend({
	direction: z.enum(['up', 'down'], { error: 'Choose up or down.' })
});

const money = (cents: number, currency: string) => formatCents(cents, currency.toUpperCase());

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const levels = await listLevels();
	const editing = event.url.searchParams.get('edit');
	return {
		limits: {
			min: money(MIN_AMOUNT_CENTS, 'usd'),
			max: money(MAX_AMOUNT_CENTS, 'usd')
		},
		editing: levels.some((l) => l.id === editing) ? editing : null,
		levels: levels.map((l) => ({
			id: l.id,
			name: l.name,
			description: l.description,
			amount: money(l.amountCents, l.currency),
			interval: l.interval,
			kind: l.kind,
			goods: l.goods,
			fairMarketValue: money(l.fairMarketValueCents, l.currency),
			active: l.active,
			adoptionCount: l.adoptionCount,
			values: {
				name: l.name,
				description: l.description,
				amount: centsToDollars(l.amountCents),
				interval: l.interval,
				kind: l.kind,
				goods: l.goods,
				fairMarketValue: centsToDollars(l.fairMarketValueCents),
				goodsTokenItem: l.goodsTokenItem ? 'on' : ''
			}
		}))
	};
};

/** A refusal by the rules becomes a 400 for the form that asked; anything else is a bug. */
function refused(
	form: LevelForm,
	err: unknown,
	levelId: string | null,
	values?: Record<string, string>
) {
	if (err instanceof LevelRefused) {
		return fail(400, { form, levelId, message: err.message, errors: err.errors, values });
	}
	throw err;
}

function invalid(
	form: LevelForm,
	levelId: string | null,
	parsed: { errors: Record<string, string>; values: Record<string, string> }
) {
	const message =
		Object.keys(parsed.errors).length > 1
			? 'Some fields need attention; see the messages beside them.'
			: Object.values(parsed.errors)[0];
	return fail(400, { form, levelId, message, errors: parsed.errors, values: parsed.values });
}

export const actions: Actions = {
	create: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(levelForm, await event.request.formData());
		if (!parsed.ok) return invalid('create', null, parsed);
		try {
			const level = await createLevel(parsed.data, actor.id);
			return { form: 'create' as const, levelId: level.id, done: `Added “${level.name}”.` };
		} catch (err) {
			return refused('create', err, null, parsed.values);
		}
	},

	update: async (event) => {
		const actor = requireRoles(event, ...area);
		const data = await event.request.formData();
		const ref = parseForm(levelRef, data);
		if (!ref.ok) return invalid('update', null, ref);
		const { levelId } = ref.data;
		const parsed = parseForm(levelForm, data);
		if (!parsed.ok) return invalid('update', levelId, parsed);
		try {
			const { level, changed } = await updateLevel(levelId, parsed.data, actor.id);
			return {
				form: 'update' as const,
				levelId,
				done: changed.length ? `Saved “${level.name}”.` : `Nothing changed in “${level.name}”.`
			};
		} catch (err) {
			return refused('update', err, levelId, parsed.values);
		}
	},

	move: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(moveForm, await event.request.formData());
		if (!parsed.ok) return invalid('move', null, parsed);
		const { levelId, direction } = parsed.data;
		try {
			await moveLevel(levelId, direction, actor.id);
		} catch (err) {
			return refused('move', err, levelId);
		}
		return { form: 'move' as const, levelId, done: `Moved the level ${direction}.` };
	},

	retire: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(levelRef, await event.request.formData());
		if (!parsed.ok) return invalid('retire', null, parsed);
		const { levelId } = parsed.data;
		try {
			await setLevelActive(levelId, false, actor.id);
		} catch (err) {
			return refused('retire', err, levelId);
		}
		return {
			form: 'retire' as const,
			levelId,
			done: 'Retired: the level is no longer on the adopt form.'
		};
	},

	restore: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(levelRef, await event.request.formData());
		if (!parsed.ok) return invalid('restore', null, parsed);
		const { levelId } = parsed.data;
		try {
			await setLevelActive(levelId, true, actor.id);
		} catch (err) {
			return refused('restore', err, levelId);
		}
		return {
			form: 'restore' as const,
			levelId,
			done: 'Restored: the level is on the adopt form again.'
		};
	},

	delete: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(levelRef, await event.request.formData());
		if (!parsed.ok) return invalid('delete', null, parsed);
		const { levelId } = parsed.data;
		try {
			await deleteLevel(levelId, actor.id);
		} catch (err) {
			return refused('delete', err, levelId);
		}
		return { form: 'delete' as const, levelId, done: 'Level deleted.' };
	}
};
