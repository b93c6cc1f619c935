import { redirect, text } from '@sveltejs/kit';
import { unsubscribe, targetOf } from '$lib/server/updates/unsubscribe';
import type { RequestHandler } from './$types';

// RFC 8058 one-click unsubscribe. The mail client POSTs `List-Unsubscribe=One-Click` to this URL
// with no cookie; the signed token alone says who leaves which list. The answer is immediate and
// is not a redirect. (The app's own CSRF check lets this one path through: see hooks.server.ts.)
export const POST: RequestHandler = async ({ params }) => {
	const target = await unsubscribe(params.token);
	if (!target) {
		return text('This unsubscribe link is not valid. Nothing was changed.', { status: 400 });
	}
	return text('You are unsubscribed. The change took effect at once.', {
		headers: { 'cache-control': 'no-store' }
	});
};

// Opening the address in a browser (or a link checker fetching it) changes nothing: it leads to
// the preferences page, where the reader chooses.
export const GET: RequestHandler = async ({ params }) => {
	if (!(await targetOf(params.token))) {
		return text('This unsubscribe link is not valid.', { status: 400 });
	}
	redirect(303, `/preferences/${params.token}`);
};
