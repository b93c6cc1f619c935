// The one Stripe client of the app. With STRIPE_SECRET_KEY it talks to the real service; without
// it (demo, development, tests) to the local fake, which answers the same SDK calls. Nothing else
// in the app knows the difference.
import Stripe from 'stripe';
import { FAKE_SECRET_KEY, fakeMode, fakeWebhookSecret } from './fake';

const holder = globalThis as typeof globalThis & { __tidewardStripe?: Stripe };

export function stripe(): Stripe {
	holder.__tidewardStripe ??= new Stripe(process.env.STRIPE_SECRET_KEY ?? FAKE_SECRET_KEY, {
		maxNetworkRetries: 2,
		appInfo: { name: 'Tideward' }
	});
	return holder.__tidewardStripe;
}

/** The secret that signs webhook events sent to POST /api/webhooks/stripe. */
export function webhookSecret(): string {
	if (fakeMode()) return fakeWebhookSecret();
	const secret = process.env.STRIPE_WEBHOOK_SECRET;
	if (!secret) throw new Error('STRIPE_WEBHOOK_SECRET must be set when STRIPE_SECRET_KEY is.');
	return secret;
}
