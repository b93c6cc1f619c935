import { json } from '@sveltejs/kit';
import { requireRoles } from '$lib/server/auth/roles';
import { renderMarkdown } from '$lib/server/newsroom/markdown';
import { STAFF_AREAS } from '$lib/staff-areas';
import type { RequestHandler } from './$types';

// The live preview renders exactly what will be saved: marked, then sanitize-html, on the server.
export const POST: RequestHandler = async (event) => {
	requireRoles(event, ...STAFF_AREAS.newsroom.roles);
	const body = (await event.request.json().catch(() => null)) as { markdown?: unknown } | null;
	if (!body || typeof body.markdown !== 'string' || body.markdown.length > 50_000) {
		return json(
			{ error: 'Send the story text as { "markdown": "…" }, at most 50,000 characters.' },
			{ status: 400 }
		);
	}
	return json({ html: renderMarkdown(body.markdown) });
};
