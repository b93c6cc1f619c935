import { desc, eq } from 'drizzle-orm';
import { requireRoles } from '$lib/server/auth/roles';
import { db } from '$lib/server/db';
import { auditLog, users } from '$lib/server/db/schema';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	requireRoles(event, ...STAFF_AREAS.audit.roles);
	const entries = await db()
		.select({
			id: auditLog.id,
			at: auditLog.at,
			action: auditLog.action,
			subject: auditLog.subject,
			details: auditLog.details,
			actor: users.name
		})
		.from(auditLog)
		.leftJoin(users, eq(users.id, auditLog.actorId))
		.orderBy(desc(auditLog.at), desc(auditLog.id))
		.limit(200);
	return { entries: entries.map((e) => ({ ...e, details: JSON.stringify(e.details) })) };
};
