import { fail } from '@sveltejs/kit';
import { asc, eq } from 'drizzle-orm';
import { z } from 'zod';
import {
	EmailTaken,
	grantRole,
	inviteStaff,
	LastAdmin,
	revokeRole,
	setAccountDisabled
} from '$lib/server/auth/accounts';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { roles as rolesTable, users } from '$lib/server/db/schema';
import { email, name, parseForm, fieldError } from '$lib/server/forms';
import { ROLES, type Role } from '$lib/roles';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { Actions, PageServerLoad } from './$types';

const area = STAFF_AREAS.users.roles;
const role = z.enum(ROLES, { error: 'Choose a role.' });
const staffRole = z.enum(['educator', 'tracker', 'development', 'admin'], {
	error: 'Choose at least one staff role.'
});

const inviteForm = z.object({
	name,
	email,
	roles: z.preprocess(
		(v) => (v === undefined ? [] : Array.isArray(v) ? v : [v]),
		z.array(staffRole).min(1, 'Choose at least one staff role.')
	)
});
const roleForm = z.object({ userId: z.string().min(1), role });
const accountForm = z.object({ userId: z.string().min(1) });

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...area);
	const [people, held] = await Promise.all([
		db()
			.select({
				id: users.id,
				name: users.name,
				email: users.email,
				disabledAt: users.disabledAt,
				hasPassword: users.passwordHash
			})
			.from(users)
			.orderBy(asc(users.name)),
		db().select({ userId: rolesTable.userId, role: rolesTable.role }).from(rolesTable)
	]);
	const rolesByUser = new Map<string, Role[]>();
	for (const { userId, role } of held)
		rolesByUser.set(userId, [...(rolesByUser.get(userId) ?? []), role]);
	return {
		people: people.map((p) => ({
			id: p.id,
			name: p.name,
			email: p.email,
			disabled: p.disabledAt !== null,
			invited: p.hasPassword === null,
			roles: (rolesByUser.get(p.id) ?? []).sort()
		}))
	};
};

function refusal(error: unknown) {
	if (error instanceof LastAdmin) return fail(400, { message: error.message });
	if (error instanceof Error && error.message === 'You cannot disable your own account.') {
		return fail(400, { message: error.message });
	}
	throw error;
}

async function userExists(userId: string) {
	return (await db().select({ id: users.id }).from(users).where(eq(users.id, userId))).length > 0;
}

export const actions: Actions = {
	invite: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(inviteForm, await event.request.formData());
		if (!parsed.ok)
			return fail(400, { form: 'invite', errors: parsed.errors, values: parsed.values });
		try {
			await inviteStaff(actor, parsed.data);
		} catch (error) {
			if (error instanceof EmailTaken) {
				return fail(400, {
					form: 'invite',
					errors: fieldError('email', error.message),
					values: parsed.values
				});
			}
			throw error;
		}
		return { form: 'invite', done: `Invitation sent to ${parsed.data.email}.` };
	},

	grant: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(roleForm, await event.request.formData());
		if (!parsed.ok || !(await userExists(parsed.data.userId))) {
			return fail(400, { message: 'Choose a person and a role.' });
		}
		await grantRole(actor.id, parsed.data.userId, parsed.data.role);
		return { done: 'Role granted.' };
	},

	revoke: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(roleForm, await event.request.formData());
		if (!parsed.ok) return fail(400, { message: 'Choose a person and a role.' });
		try {
			await revokeRole(actor.id, parsed.data.userId, parsed.data.role);
		} catch (error) {
			return refusal(error);
		}
		return { done: 'Role revoked.' };
	},

	disable: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(accountForm, await event.request.formData());
		if (!parsed.ok || !(await userExists(parsed.data.userId)))
			return fail(400, { message: 'Choose a person.' });
		try {
			await setAccountDisabled(actor.id, parsed.data.userId, true);
		} catch (error) {
			return refusal(error);
		}
		return { done: 'Account disabled; its sessions have ended.' };
	},

	enable: async (event) => {
		const actor = requireRoles(event, ...area);
		const parsed = parseForm(accountForm, await event.request.formData());
		if (!parsed.ok || !(await userExists(parsed.data.userId)))
			return fail(400, { message: 'Choose a person.' });
		await setAccountDisabled(actor.id, parsed.data.userId, false);
		return { done: 'Account enabled.' };
	}
};
