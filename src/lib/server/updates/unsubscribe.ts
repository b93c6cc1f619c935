// Acting on a signed unsubscribe link: the one-click POST of RFC 8058, and the preferences page
// reached from the footer link, which works without signing in.
import { db } from '../db';
import { getPreferences, savePreferences, type Preferences } from '../mail/preferences';
import { readUnsubscribeToken, signingKey, type UnsubscribeTarget } from './tokens';

export async function targetOf(token: string): Promise<UnsubscribeTarget | null> {
	return readUnsubscribeToken(await signingKey(), token);
}

/** Turns the token's category off for its address, at once. Null for a bad token. */
export async function unsubscribe(token: string): Promise<UnsubscribeTarget | null> {
	const target = await targetOf(token);
	if (!target) return null;
	await savePreferences(db(), target.email, { [target.category]: false });
	return target;
}

/** The address and its preferences for the preferences page. Null for a bad token. */
export async function preferencesByToken(token: string) {
	const target = await targetOf(token);
	if (!target) return null;
	return { target, preferences: await getPreferences(db(), target.email) };
}

/** Saves the preferences of the token's address. Null for a bad token. */
export async function savePreferencesByToken(
	token: string,
	changes: Preferences
): Promise<UnsubscribeTarget | null> {
	const target = await targetOf(token);
	if (!target) return null;
	await savePreferences(db(), target.email, changes);
	return target;
}
