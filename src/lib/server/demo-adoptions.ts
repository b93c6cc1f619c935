// Demo mode with the local test payment service: a few invented supporters have adopted patients,
// paid through the same Checkout and webhook path a visitor uses (so their gifts carry processor
// ids, receipts and thank-you e-mails like any other). Runs once, on an empty adoptions table.
import { count, eq, inArray } from 'drizzle-orm';
import { startCheckout } from './adoptions/checkout';
import { db } from './db';
import { adoptionLevels, adoptions, patients, users } from './db/schema';
import { payCheckoutSession } from './payments/fake';

interface DemoAdoption {
	supporter: string;
	patient: string;
	level: string;
	kind: 'self' | 'gift' | 'classroom';
	recipient?: { name: string; email: string; message: string };
	classroom?: { teacherName: string; schoolName: string; classSize: number };
}

// Tomás (the demo's first supporter) is left without adoptions: the browser tests adopt as him.
const DEMO_ADOPTIONS: DemoAdoption[] = [
	{ supporter: 'dolores.supporter@tideward.test', patient: 'perla', level: 'swell', kind: 'self' },
	{
		supporter: 'kwame.supporter@tideward.test',
		patient: 'brisa',
		level: 'reef-classroom',
		kind: 'classroom',
		classroom: {
			teacherName: 'Kwame Osei Marín',
			schoolName: 'Escuela Punta Arenas',
			classSize: 26
		}
	},
	{
		supporter: 'aiko.supporter@tideward.test',
		patient: 'coralina',
		level: 'ripple',
		kind: 'gift',
		recipient: {
			name: 'Inés Brandt',
			email: 'ines.gift@tideward.test',
			message: 'For the turtle lover in the family. Happy birthday!'
		}
	}
];

export async function ensureDemoAdoptions(): Promise<number> {
	const [{ n }] = await db().select({ n: count() }).from(adoptions);
	if (n > 0) return 0;
	const people = new Map(
		(
			await db()
				.select({ id: users.id, email: users.email, name: users.name })
				.from(users)
				.where(
					inArray(
						users.email,
						DEMO_ADOPTIONS.map((a) => a.supporter)
					)
				)
		).map((u) => [u.email, u])
	);
	let made = 0;
	for (const demo of DEMO_ADOPTIONS) {
		const supporter = people.get(demo.supporter);
		const [patient] = await db()
			.select({ id: patients.id })
			.from(patients)
			.where(eq(patients.slug, demo.patient));
		const [level] = await db()
			.select()
			.from(adoptionLevels)
			.where(eq(adoptionLevels.slug, demo.level));
		if (!supporter || !patient || !level) continue;
		const { url } = await startCheckout({
			attemptId: crypto.randomUUID(),
			patientId: patient.id,
			levelId: level.id,
			amountCents: level.amountCents,
			kind: demo.kind,
			supporter,
			recipientName: demo.recipient?.name,
			recipientEmail: demo.recipient?.email,
			giftMessage: demo.recipient?.message,
			...demo.classroom
		});
		const paid = payCheckoutSession(url.split('/').at(-1)!, {
			cardNumber: '4242 4242 4242 4242',
			name: supporter.name
		});
		if (paid.ok) made++;
	}
	return made;
}
