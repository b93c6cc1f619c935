import { sha256 } from '@oslojs/crypto/sha2';
import { encodeBase32LowerCaseNoPadding, encodeHexLowerCase } from '@oslojs/encoding';
import { and, eq, gt, isNull } from 'drizzle-orm';
import type { Executor } from '../db';
import { authTokens, type TokenPurpose } from '../db/schema';

export function hashToken(token: string): string {
	return encodeHexLowerCase(sha256(new TextEncoder().encode(token)));
}

/** A new one-time token; only its hash is stored, the caller mails the token itself. */
export async function createToken(
	tx: Executor,
	userId: string,
	purpose: TokenPurpose,
	ttlMs: number
): Promise<string> {
	const token = encodeBase32LowerCaseNoPadding(crypto.getRandomValues(new Uint8Array(20)));
	await tx.insert(authTokens).values({
		tokenHash: hashToken(token),
		userId,
		purpose,
		expiresAt: new Date(Date.now() + ttlMs)
	});
	return token;
}

function usable(token: string, purpose: TokenPurpose) {
	return and(
		eq(authTokens.tokenHash, hashToken(token)),
		eq(authTokens.purpose, purpose),
		isNull(authTokens.usedAt),
		gt(authTokens.expiresAt, new Date())
	);
}

/** The user a token belongs to, if it is still usable; does not use it up. */
export async function peekToken(
	tx: Executor,
	token: string,
	purpose: TokenPurpose
): Promise<string | null> {
	const [row] = await tx
		.select({ userId: authTokens.userId })
		.from(authTokens)
		.where(usable(token, purpose));
	return row?.userId ?? null;
}

/**
 * Uses a token up. One conditional UPDATE, so two requests racing with the same link cannot both
 * succeed.
 */
export async function consumeToken(
	tx: Executor,
	token: string,
	purpose: TokenPurpose
): Promise<string | null> {
	const [row] = await tx
		.update(authTokens)
		.set({ usedAt: new Date() })
		.where(usable(token, purpose))
		.returning({ userId: authTokens.userId });
	return row?.userId ?? null;
}
