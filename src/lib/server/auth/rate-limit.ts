import { RateLimiterDrizzle, RateLimiterRes } from 'rate-limiter-flexible';
import { db, type Database } from '../db';
import { rateLimits } from '../db/schema';

// Counters live in the database so that every instance sees the same ones. Limits are common
// practice for sign-in forms (a handful of tries per account, more per address, over minutes).
const WINDOW_SECONDS = 15 * 60;
export const LIMITS = {
	account: 5,
	address: 20,
	mailPerAddress: 10
} as const;

type LimiterName = keyof typeof LIMITS;

let bound: { database: Database; limiters: Record<LimiterName, RateLimiterDrizzle> } | undefined;

function limiter(name: LimiterName): RateLimiterDrizzle {
	const database = db();
	if (!bound || bound.database !== database) {
		const make = (keyPrefix: LimiterName) =>
			new RateLimiterDrizzle({
				storeClient: database,
				schema: rateLimits,
				keyPrefix,
				points: LIMITS[keyPrefix],
				duration: WINDOW_SECONDS,
				clearExpiredByTimeout: false
			});
		bound = {
			database,
			limiters: {
				account: make('account'),
				address: make('address'),
				mailPerAddress: make('mailPerAddress')
			}
		};
	}
	return bound.limiters[name];
}

export class TooManyAttempts extends Error {
	constructor(public readonly retryAfterSeconds: number) {
		super(
			`Too many attempts. Please wait ${Math.max(1, Math.ceil(retryAfterSeconds / 60))} minute(s) and try again.`
		);
	}
}

async function remaining(name: LimiterName, key: string): Promise<RateLimiterRes | null> {
	return limiter(name).get(key);
}

/** Throws TooManyAttempts when the account or the address is already over its limit. */
export async function assertSignInAllowed(email: string, address: string): Promise<void> {
	const [account, ip] = await Promise.all([
		remaining('account', email.toLowerCase()),
		remaining('address', address)
	]);
	for (const [res, name] of [
		[account, 'account'],
		[ip, 'address']
	] as const) {
		if (res && res.consumedPoints >= LIMITS[name])
			throw new TooManyAttempts(res.msBeforeNext / 1000);
	}
}

export async function recordFailedSignIn(email: string, address: string): Promise<void> {
	await Promise.all([
		limiter('account')
			.consume(email.toLowerCase())
			.catch(() => undefined),
		limiter('address')
			.consume(address)
			.catch(() => undefined)
	]);
}

export async function clearFailedSignIns(email: string): Promise<void> {
	await limiter('account').delete(email.toLowerCase());
}

/** Counts a request that sends mail (sign-in link, reset) against the address's allowance. */
export async function consumeMailAllowance(address: string): Promise<void> {
	try {
		await limiter('mailPerAddress').consume(address);
	} catch (error) {
		if (error instanceof RateLimiterRes) throw new TooManyAttempts(error.msBeforeNext / 1000);
		throw error;
	}
}
