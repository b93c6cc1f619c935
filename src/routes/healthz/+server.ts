import { json } from '@sveltejs/kit';
import { sql } from 'drizzle-orm';
import { databaseKind, db } from '$lib/server/db';
import type { RequestHandler } from './$types';

// Public by design: load balancers and uptime checks call it without signing in.
export const GET: RequestHandler = async () => {
	const started = performance.now();
	try {
		await db().execute(sql`select 1`);
		return json({
			status: 'ok',
			database: {
				state: 'up',
				kind: databaseKind(),
				latencyMs: Math.round(performance.now() - started)
			}
		});
	} catch {
		return json(
			{ status: 'error', database: { state: 'down', kind: databaseKind() } },
			{ status: 503 }
		);
	}
};
