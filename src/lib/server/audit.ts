import type { Executor } from './db';
import { auditLog } from './db/schema';

/** Records a staff action: who, what, on what. Call it inside the action's transaction. */
export async function audit(
	tx: Executor,
	actorId: string | null,
	action: string,
	subject: string | null,
	details: Record<string, unknown> = {}
): Promise<void> {
	await tx.insert(auditLog).values({ actorId, action, subject, details });
}
