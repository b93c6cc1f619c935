// Starting an adoption: a pending row, then a Checkout session at the processor with the
// adoption's details in metadata. The form's attempt id is both the adoption id and the
// idempotency key, so a double submit creates one adoption and one session.
import { and, asc, eq, inArray, ne, sql } from 'drizzle-orm';
import { appOrigin } from '../config';
import { db } from '../db';
import { adoptionLevels, adoptions, patients, type AdoptionKind } from '../db/schema';
import { stripe } from '../payments/client';
import { log } from '$lib/server/log';

export interface AdoptionRequest {
	attemptId: string;
	patientId: string;
	levelId: string;
	/** The level's amount or more, in cents. */
	amountCents: number;
	kind: AdoptionKind;
	supporter: { id: string | null; email: string; name: string };
	recipientName?: string | null;
	recipientEmail?: string | null;
	giftMessage?: string | null;
	deliverOn?: string | null;
	teacherName?: string | null;
	schoolName?: string | null;
	classSize?: number | null;
}

/** The processor could not be reached or refused the session; nothing was charged. */
export class CheckoutUnavailable extends Error {}

export async function activeLevels() {
	return db()
		.select()
		.from(adoptionLevels)
		.where(eq(adoptionLevels.active, true))
		.orderBy(asc(adoptionLevels.position), asc(adoptionLevels.amountCents));
}

/** Patients a visitor may adopt: shown publicly, alive, not hidden. */
export async function adoptablePatient(slug: string) {
	const [row] = await db()
		.select({ id: patients.id, slug: patients.slug, name: patients.name, status: patients.status })
		.from(patients)
		.where(
			and(
				eq(patients.slug, slug),
				eq(patients.publicTreatment, 'shown'),
				ne(patients.status, 'died')
			)
		);
	return row ?? null;
}

/**
 * "The patient who needs it most": of the patients still in care (admitted or in rehabilitation)
 * and shown publicly, the one with the fewest active adoptions; among equals, the one in care the
 * longest. Null when no patient is in care.
 */
export async function patientMostInNeed() {
	const supporters = sql<number>`(
		SELECT count(*)::int FROM ${adoptions}
		WHERE ${adoptions.patientId} = ${patients.id} AND ${adoptions.status} = 'active'
	)`;
	const [row] = await db()
		.select({
			slug: patients.slug,
			name: patients.name,
			admittedOn: patients.admittedOn,
			summary: patients.summary,
			supporters
		})
		.from(patients)
		.where(
			and(
				eq(patients.publicTreatment, 'shown'),
				inArray(patients.status, ['admitted', 'in_rehabilitation'])
			)
		)
		.orderBy(supporters, asc(patients.admittedOn), asc(patients.name))
		.limit(1);
	return row ?? null;
}

/** Creates (or finds, for a repeated attempt) the adoption and its Checkout session; returns its URL. */
export async function startCheckout(
	request: AdoptionRequest
): Promise<{ adoptionId: string; url: string }> {
	const [level] = await db()
		.select()
		.from(adoptionLevels)
		.where(eq(adoptionLevels.id, request.levelId));
	const [patient] = await db()
		.select({ id: patients.id, slug: patients.slug, name: patients.name })
		.from(patients)
		.where(eq(patients.id, request.patientId));
	if (!level || !patient) throw new Error('startCheckout: unknown level or patient');

	await db()
		.insert(adoptions)
		.values({
			id: request.attemptId,
			patientId: patient.id,
			levelId: level.id,
			kind: request.kind,
			interval: level.interval,
			amountCents: request.amountCents,
			currency: level.currency,
			fairMarketValueCents: level.fairMarketValueCents,
			supporterId: request.supporter.id,
			supporterEmail: request.supporter.email,
			supporterName: request.supporter.name,
			recipientName: request.recipientName ?? null,
			recipientEmail: request.recipientEmail ?? null,
			giftMessage: request.giftMessage ?? null,
			deliverOn: request.deliverOn ?? null,
			teacherName: request.teacherName ?? null,
			schoolName: request.schoolName ?? null,
			classSize: request.classSize ?? null
		})
		.onConflictDoNothing({ target: adoptions.id });
	const [adoption] = await db().select().from(adoptions).where(eq(adoptions.id, request.attemptId));

	const metadata = {
		adoption_id: adoption.id,
		patient_id: patient.id,
		level_id: level.id,
		kind: adoption.kind
	};
	const origin = appOrigin();
	const monthly = adoption.interval === 'month';
	let session;
	try {
		session = await stripe().checkout.sessions.create(
			{
				mode: monthly ? 'subscription' : 'payment',
				client_reference_id: adoption.id,
				customer_email: adoption.supporterEmail,
				line_items: [
					{
						quantity: 1,
						price_data: {
							currency: adoption.currency,
							unit_amount: adoption.amountCents,
							product_data: {
								name: `${level.name} adoption of ${patient.name}`,
								description: 'A symbolic adoption supporting the hospital’s patients.'
							},
							...(monthly ? { recurring: { interval: 'month' as const } } : {})
						}
					}
				],
				metadata,
				...(monthly ? { subscription_data: { metadata } } : { payment_intent_data: { metadata } }),
				success_url: `${origin}/adopt/thanks?session_id={CHECKOUT_SESSION_ID}`,
				cancel_url: `${origin}/patients/${patient.slug}/adopt?cancelled=1`
			},
			{ idempotencyKey: `adoption-checkout-${adoption.id}` }
		);
	} catch (error) {
		log().error({ err: error }, 'creating a checkout session failed');
		throw new CheckoutUnavailable(
			'The payment service could not be reached; nothing was charged. Please try again in a moment.'
		);
	}
	if (!session.url) throw new CheckoutUnavailable('The payment service gave no payment page.');
	await db()
		.update(adoptions)
		.set({ checkoutSessionId: session.id, updatedAt: new Date() })
		.where(eq(adoptions.id, adoption.id));
	return { adoptionId: adoption.id, url: session.url };
}

/** What the thank-you page shows about a checkout session (public to whoever holds its id). */
export async function adoptionForSession(sessionId: string) {
	const [row] = await db()
		.select({
			status: adoptions.status,
			kind: adoptions.kind,
			interval: adoptions.interval,
			amountCents: adoptions.amountCents,
			currency: adoptions.currency,
			patientName: patients.name,
			patientSlug: patients.slug,
			levelName: adoptionLevels.name,
			recipientName: adoptions.recipientName
		})
		.from(adoptions)
		.innerJoin(patients, eq(patients.id, adoptions.patientId))
		.innerJoin(adoptionLevels, eq(adoptionLevels.id, adoptions.levelId))
		.where(eq(adoptions.checkoutSessionId, sessionId));
	return row ?? null;
}
