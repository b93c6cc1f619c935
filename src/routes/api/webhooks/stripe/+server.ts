import { json } from '@sveltejs/kit';
import type Stripe from 'stripe';
import { z } from 'zod';
import { stripe, webhookSecret } from '$lib/server/payments/client';
import { applyEvent } from '$lib/server/payments/events';
import type { RequestHandler } from './$types';
import { log } from '$lib/server/log';

/** What every event has, whatever its type (ids are the processor's, e.g. evt_1Nk…). */
const eventEnvelope = z.object({
	id: z.string().regex(/^evt_[A-Za-z0-9_]{1,255}$/),
	type: z.string().regex(/^[a-z0-9_.]{1,200}$/),
	// seconds; a JavaScript date reaches 8.64e15 ms
	created: z.number().int().min(0).max(8_640_000_000_000),
	data: z.object({ object: z.record(z.string(), z.unknown()) })
});

/**
 * The processor's webhook. The signature is checked on the raw body (400 and nothing written
 * when it fails); the event id is stored in the same transaction as its effects; 2xx only after
 * the commit, 5xx on any failure so the sender retries.
 */
export const POST: RequestHandler = async ({ request }) => {
	const signature = request.headers.get('stripe-signature');
	const body = await request.text();
	if (!signature) return json({ error: 'Missing Stripe-Signature header.' }, { status: 400 });
	let event: Stripe.Event;
	try {
		event = await stripe().webhooks.constructEventAsync(body, signature, webhookSecret());
	} catch (error) {
		return json({ error: `Signature check failed: ${(error as Error).message}` }, { status: 400 });
	}
	// A signed body that is not an event would fail the same way at every retry: refuse it.
	if (!eventEnvelope.safeParse(event).success) {
		return json({ error: 'The body is signed but is not a processor event.' }, { status: 400 });
	}
	try {
		const outcome = await applyEvent(event);
		return json({ received: true, outcome });
	} catch (error) {
		log().error(
			{ err: error, eventType: event.type, eventId: event.id },
			'applying a payment event failed'
		);
		return json({ error: 'The event could not be applied; please retry.' }, { status: 500 });
	}
};
