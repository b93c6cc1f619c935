// Signed unsubscribe links. RFC 8058's one-click POST carries no cookie, so the URL itself names
// the recipient and the list: `<payload>.<signature>`, the payload being the address and the
// category (base64url), the signature an HMAC-SHA256 over it with a secret the instances share
// (made once, kept in the database). A forged or altered token fails the comparison.
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';
import { eq } from 'drizzle-orm';
import { db, type Executor } from '../db';
import { appSecrets } from '../db/schema';
import { UPDATE_CATEGORIES, type UpdateCategory } from '../mail/preferences';

const SECRET_NAME = 'unsubscribe-links';

const holder = globalThis as typeof globalThis & { __tidewardUnsubscribeKey?: Buffer };

/** The signing key: read once, created by the first instance that needs it. */
export async function signingKey(executor: Executor = db()): Promise<Buffer> {
	if (holder.__tidewardUnsubscribeKey) return holder.__tidewardUnsubscribeKey;
	await executor
		.insert(appSecrets)
		.values({ name: SECRET_NAME, value: randomBytes(32).toString('base64url') })
		.onConflictDoNothing({ target: appSecrets.name });
	const [row] = await executor
		.select({ value: appSecrets.value })
		.from(appSecrets)
		.where(eq(appSecrets.name, SECRET_NAME));
	holder.__tidewardUnsubscribeKey = Buffer.from(row.value, 'base64url');
	return holder.__tidewardUnsubscribeKey;
}

/** Forgets the cached key (tests that open a fresh database). */
export function forgetSigningKey() {
	holder.__tidewardUnsubscribeKey = undefined;
}

const sign = (key: Buffer, payload: string) =>
	createHmac('sha256', key).update(payload).digest('base64url');

export interface UnsubscribeTarget {
	email: string;
	category: UpdateCategory;
}

export function unsubscribeToken(key: Buffer, target: UnsubscribeTarget): string {
	const payload = Buffer.from(
		JSON.stringify([target.email.trim().toLowerCase(), target.category])
	).toString('base64url');
	return `${payload}.${sign(key, payload)}`;
}

/** The address and category a token names, or null when it is malformed, forged or altered. */
export function readUnsubscribeToken(key: Buffer, token: string): UnsubscribeTarget | null {
	if (typeof token !== 'string' || token.length > 2048) return null;
	const match = /^([A-Za-z0-9_-]+)\.([A-Za-z0-9_-]{43})$/.exec(token);
	if (!match) return null;
	const [, payload, signature] = match;
	const expected = Buffer.from(sign(key, payload));
	const given = Buffer.from(signature);
	if (expected.length !== given.length || !timingSafeEqual(expected, given)) return null;
	try {
		const [email, category] = JSON.parse(Buffer.from(payload, 'base64url').toString('utf8'));
		if (typeof email !== 'string' || !email.includes('@')) return null;
		if (!(UPDATE_CATEGORIES as readonly string[]).includes(category)) return null;
		return { email, category };
	} catch {
		return null;
	}
}
