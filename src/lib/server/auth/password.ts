import { hash, verify } from '@node-rs/argon2';

// argon2id (the library's default algorithm) with OWASP's minimum parameters: 19 MiB, 2 passes.
// Tests may lower the cost through ARGON2_TEST_PARAMS=1 so that hundreds of sign-ins stay quick.
function options() {
	if (process.env.ARGON2_TEST_PARAMS === '1') {
		return { memoryCost: 1024, timeCost: 1, parallelism: 1 };
	}
	return { memoryCost: 19456, timeCost: 2, parallelism: 1 };
}

export const MIN_PASSWORD_LENGTH = 10;

export function hashPassword(password: string): Promise<string> {
	return hash(password, options());
}

export async function verifyPassword(passwordHash: string, password: string): Promise<boolean> {
	try {
		return await verify(passwordHash, password);
	} catch {
		return false;
	}
}

// Verifying against a fixed hash when the account is unknown keeps the time of a failed
// sign-in the same whether or not the e-mail exists.
let dummyHash: Promise<string> | undefined;
export async function burnPasswordCheck(password: string): Promise<void> {
	dummyHash ??= hashPassword('tideward-timing-equaliser');
	await verifyPassword(await dummyHash, password);
}
