import { fail, redirect, type RequestEvent } from '@sveltejs/kit';
import { z } from 'zod';
import { newPassword, parseForm } from '../forms';
import { setPasswordWithToken } from './accounts';
import { homeFor } from './landing';
import { startSession } from './session';
import { peekToken } from './tokens';
import { db } from '../db';

const setPasswordForm = z
	.object({ password: newPassword, confirm: z.string() })
	.refine((v) => v.password === v.confirm, {
		path: ['confirm'],
		message: 'The two passwords differ.'
	});

type Purpose = 'password_reset' | 'invite';

/** Shared by /reset/[token] and /invite/[token]: both set a password from a one-time link. */
export async function loadSetPassword(token: string, purpose: Purpose) {
	return { usable: (await peekToken(db(), token, purpose)) !== null };
}

export async function submitSetPassword(
	event: Pick<RequestEvent, 'request' | 'cookies' | 'url'> & { params: { token: string } },
	purpose: Purpose
) {
	const parsed = parseForm(setPasswordForm, await event.request.formData());
	if (!parsed.ok) return fail(400, { errors: parsed.errors });
	const userId = await setPasswordWithToken(event.params.token, purpose, parsed.data.password);
	if (!userId) return fail(400, { message: 'This link has been used or has expired.' });
	await startSession(userId, event.cookies, event.url);
	redirect(303, await homeFor(userId));
}
