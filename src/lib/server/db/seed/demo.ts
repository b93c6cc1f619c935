import { randomUUID } from 'node:crypto';
import { hashPassword } from '../../auth/password';
import type { Database } from '../index';
import {
	auditLog,
	organisationSettings,
	patients,
	roles,
	users,
	type AdmissionReason,
	type LifeStage,
	type PatientStatus,
	type Role,
	type Species
} from '../schema';

// The demo scenario: an invented hospital on the south coast of Puerto Rico with invented staff,
// supporters and patients. Every name, number and address here is made up.

export const DEMO_PASSWORD = 'tideward-demo-2026';

export interface DemoUser {
	email: string;
	name: string;
	roles: Role[];
}

export const DEMO_USERS: readonly DemoUser[] = [
	{ email: 'ramon.admin@tideward.test', name: 'Ramón Ilarraza Cintrón', roles: ['admin'] },
	{ email: 'marisol.educator@tideward.test', name: 'Marisol Arocho Vélez', roles: ['educator'] },
	{ email: 'julian.tracker@tideward.test', name: 'Julián Echevarría Soto', roles: ['tracker'] },
	{
		email: 'beatriz.development@tideward.test',
		name: 'Beatriz Olmeda Ruiz',
		roles: ['development']
	},
	{
		email: 'celeste.staff@tideward.test',
		name: 'Celeste Marrero Pagán',
		roles: ['educator', 'tracker']
	},
	{ email: 'tomas.supporter@tideward.test', name: 'Tomás Quiñones Vela', roles: ['supporter'] },
	{ email: 'dolores.supporter@tideward.test', name: 'Dolores Ventura Isern', roles: ['supporter'] },
	{ email: 'kwame.supporter@tideward.test', name: 'Kwame Osei Marín', roles: ['supporter'] },
	{ email: 'aiko.supporter@tideward.test', name: 'Aiko Brandt Lugo', roles: ['supporter'] }
];

export const DEMO_ORGANISATION = {
	displayName: 'Marejada Sea Turtle Hospital',
	legalName: 'Marejada Sea Turtle Hospital, Inc.',
	taxId: '00-5550142',
	postalAddress: 'Calle del Muelle 12\nArenas Tibias, PR 00799',
	hotlineNumber: '(787) 555-0186',
	hotlineName: 'Coastal Wildlife Hotline',
	currency: 'usd',
	distanceUnit: 'km'
} as const;

interface DemoPatient {
	slug: string;
	name: string;
	species: Species;
	lifeStage: LifeStage;
	carapaceLengthCm: string;
	weightKg: string;
	admittedDaysAgo: number;
	admissionReason: AdmissionReason;
	status: PatientStatus;
	publicTreatment?: 'shown' | 'memorial' | 'hidden';
	memorialNote?: string;
	summary: string;
	heroImage?: string;
	heroAlt?: string;
	strandingLatitude: string;
	strandingLongitude: string;
	strandingPlace: string;
	flipperTags: string[];
	microchip: string;
	transmitterId?: string;
	medicalNotes: string;
	agencyCaseNumber: string;
}

// Dates are relative to the day of seeding so that the demo always looks current.
const DEMO_PATIENTS: DemoPatient[] = [
	{
		slug: 'brisa',
		name: 'Brisa',
		species: 'green',
		lifeStage: 'juvenile',
		carapaceLengthCm: '46.2',
		weightKg: '12.40',
		admittedDaysAgo: 74,
		admissionReason: 'fibropapillomatosis',
		status: 'in_rehabilitation',
		summary:
			'Brisa came to us with soft tumours around both eyes and on the front flippers, the signs of fibropapillomatosis, a disease that affects many green turtles in warm coastal waters. Our vets have removed the growths that blocked Brisa’s sight, and Brisa now finds seagrass and lettuce in the pool without help. A few more clear check-ups are needed before release can be discussed.',
		heroImage: '/demo/green-juvenile.svg',
		heroAlt: 'Illustration of a green turtle swimming over a teal background',
		strandingLatitude: '17.965100',
		strandingLongitude: '-66.394200',
		strandingPlace: 'Seagrass bay east of the hospital, floating near the channel marker',
		flipperTags: ['TWD-0412', 'TWD-0413'],
		microchip: '999000000041201',
		medicalNotes:
			'FP tumours removed from both eyes (laser) on day 12, three flipper masses on day 30. Regrowth check and bloodwork every three weeks.',
		agencyCaseNumber: 'ARV-26-0031'
	},
	{
		slug: 'coralina',
		name: 'Coralina',
		species: 'hawksbill',
		lifeStage: 'juvenile',
		carapaceLengthCm: '36.5',
		weightKg: '5.80',
		admittedDaysAgo: 58,
		admissionReason: 'entanglement',
		status: 'ready_for_release',
		summary:
			'Coralina was found caught in a loop of discarded fishing line that had cut deep into the left front flipper. Weeks of wound care and swimming practice have paid off: the flipper has healed, and Coralina dives, feeds and rests like a wild hawksbill again. We are now waiting for the release to be authorised.',
		heroImage: '/demo/hawksbill.svg',
		heroAlt: 'Illustration of a hawksbill turtle swimming over a blue background',
		strandingLatitude: '17.948300',
		strandingLongitude: '-66.721700',
		strandingPlace: 'Rocky point below the lighthouse road',
		flipperTags: ['TWD-0398', 'TWD-0399'],
		microchip: '999000000039802',
		medicalNotes:
			'Constriction wound L front flipper, tendon intact. Silver sulfadiazine dressings to day 35. Cleared by the vet; release request sent to the agency.',
		agencyCaseNumber: 'ARV-26-0027'
	},
	{
		slug: 'timon',
		name: 'Timón',
		species: 'loggerhead',
		lifeStage: 'subadult',
		carapaceLengthCm: '72.8',
		weightKg: '54.10',
		admittedDaysAgo: 121,
		admissionReason: 'boat_strike',
		status: 'in_rehabilitation',
		summary:
			'Timón was struck by a boat propeller and arrived with three deep cuts across the back of the shell. The fractures are now stable and covered with new tissue, and Timón has gone from floating at the surface to diving to the bottom of the deep pool. Shells heal slowly, so this is a patient for patience.',
		heroImage: '/demo/loggerhead.svg',
		heroAlt: 'Illustration of a loggerhead turtle swimming over a sandy background',
		strandingLatitude: '17.930200',
		strandingLongitude: '-66.512000',
		strandingPlace: 'Drifting about 2 km off the harbour mouth, reported by a ferry crew',
		flipperTags: ['TWD-0377', 'TWD-0378'],
		microchip: '999000000037703',
		medicalNotes:
			'Three propeller wounds, caudal carapace; fractures stabilised with bridges. Vacuum-assisted closure for six weeks. Buoyancy normal since day 60.',
		agencyCaseNumber: 'ARV-26-0019'
	},
	{
		slug: 'perla',
		name: 'Perla',
		species: 'olive_ridley',
		lifeStage: 'adult',
		carapaceLengthCm: '63.9',
		weightKg: '37.20',
		admittedDaysAgo: 210,
		admissionReason: 'entanglement',
		status: 'released',
		summary:
			'Perla, an adult female, was found offshore wrapped in a drifting ghost net with both front flippers bound. After six weeks of treatment and strength-building she swam out past the reef on release day carrying a satellite transmitter. Olive ridleys are rare visitors to our coast, which made her stay all the more special.',
		heroImage: '/demo/olive-ridley.svg',
		heroAlt: 'Illustration of an olive ridley turtle swimming over a sea-green background',
		strandingLatitude: '17.901200',
		strandingLongitude: '-66.981000',
		strandingPlace: 'Offshore, about 6 km south of the western point, in a drifting net',
		flipperTags: ['TWD-0344', 'TWD-0345'],
		microchip: '999000000034404',
		transmitterId: 'TWD-SAT-0007',
		medicalNotes:
			'Net constriction both front flippers, superficial. Mild dehydration corrected in 4 days. Released with satellite transmitter after agency authorisation.',
		agencyCaseNumber: 'ARV-25-0112'
	},
	{
		slug: 'centella',
		name: 'Centella',
		species: 'kemps_ridley',
		lifeStage: 'juvenile',
		carapaceLengthCm: '29.4',
		weightKg: '3.20',
		admittedDaysAgo: 3,
		admissionReason: 'fishing_hook_or_line',
		status: 'admitted',
		summary:
			'Centella swallowed a fishing hook and was brought to us by licensed responders. X-rays show where the hook sits, and our vets are planning the gentlest way to remove it. Kemp’s ridleys are very rare this far south, so the whole team is giving this small visitor extra attention.',
		heroImage: '/demo/kemps-ridley.svg',
		heroAlt: 'Illustration of a Kemp’s ridley turtle swimming over a coral-red background',
		strandingLatitude: '17.971800',
		strandingLongitude: '-66.256300',
		strandingPlace: 'Public fishing pier west of the marina',
		flipperTags: ['TWD-0431'],
		microchip: '999000000043105',
		medicalNotes:
			'J-hook in the lower oesophagus on radiograph, line trailing 40 cm. Endoscopic removal planned under sedation.',
		agencyCaseNumber: 'ARV-26-0044'
	},
	{
		slug: 'gota',
		name: 'Gota',
		species: 'leatherback',
		lifeStage: 'post_hatchling',
		carapaceLengthCm: '6.2',
		weightKg: '0.05',
		admittedDaysAgo: 40,
		admissionReason: 'other',
		status: 'released',
		summary:
			'Gota was found weak and tangled in seaweed at the tideline a few days after hatching, long after its nestmates had reached the water. After two days of rest and observation the team released this tiny leatherback offshore, beyond the weed lines, where young leatherbacks belong. Leatherbacks grow into the largest turtles on Earth; Gota weighed about as much as an egg.',
		heroImage: '/demo/leatherback.svg',
		heroAlt: 'Illustration of a small leatherback turtle swimming in deep blue water',
		strandingLatitude: '17.956000',
		strandingLongitude: '-67.074400',
		strandingPlace: 'Nesting beach west of the bay, at the high-tide line',
		flipperTags: [],
		microchip: '',
		medicalNotes:
			'Straggler hatchling, mildly dehydrated, no injuries. Not tagged (too small). Released 8 km offshore on day 3.',
		agencyCaseNumber: 'ARV-26-0035'
	},
	{
		slug: 'faro',
		name: 'Faro',
		species: 'green',
		lifeStage: 'subadult',
		carapaceLengthCm: '68.0',
		weightKg: '41.60',
		admittedDaysAgo: 912,
		admissionReason: 'boat_strike',
		status: 'permanent_resident',
		summary:
			'Faro was hit by a boat more than two years ago. The wound healed, but air now gets trapped under the shell and Faro cannot dive properly; a turtle that cannot dive cannot feed or escape danger in the wild, so Faro lives with us for good. Faro helps our educators show visitors how much a single boat strike can change.',
		heroImage: '/demo/green-subadult.svg',
		heroAlt: 'Illustration of a green turtle gliding over a pale blue background',
		strandingLatitude: '17.981100',
		strandingLongitude: '-66.608000',
		strandingPlace: 'Marina channel, beside the fuel dock',
		flipperTags: ['TWD-0188', 'TWD-0189'],
		microchip: '999000000018806',
		medicalNotes:
			'Chronic coelomic air after healed carapace fracture; positive buoyancy on the right. Not releasable (vet and agency agreed). Weighted harness trials ongoing.',
		agencyCaseNumber: 'ARV-24-0071'
	},
	{
		slug: 'marea',
		name: 'Marea',
		species: 'hawksbill',
		lifeStage: 'subadult',
		carapaceLengthCm: '58.3',
		weightKg: '21.70',
		admittedDaysAgo: 9,
		admissionReason: 'debris_ingestion',
		status: 'admitted',
		summary:
			'Marea was found floating and unable to dive, with a gut blocked by swallowed plastic. Fluids, gentle feeding and time are helping Marea pass the debris, and each day brings a little more appetite. It is early days, and the team is watching closely.',
		heroImage: '/demo/hawksbill-subadult.svg',
		heroAlt: 'Illustration of a hawksbill turtle swimming over a light blue background',
		strandingLatitude: '17.940700',
		strandingLongitude: '-66.860200',
		strandingPlace: 'Mangrove channel near the salt flats',
		flipperTags: ['TWD-0425', 'TWD-0426'],
		microchip: '999000000042507',
		medicalNotes:
			'Intestinal impaction on radiograph; plastic fragments passed on days 4 and 7. Mineral oil, fluids SC, squid slurry by tube.',
		agencyCaseNumber: 'ARV-26-0041'
	},
	{
		slug: 'luz',
		name: 'Luz',
		species: 'green',
		lifeStage: 'juvenile',
		carapaceLengthCm: '39.1',
		weightKg: '7.20',
		admittedDaysAgo: 95,
		admissionReason: 'debris_ingestion',
		status: 'died',
		publicTreatment: 'memorial',
		memorialNote:
			'Luz died in our care after three weeks of treatment. The plastic Luz had swallowed had done more harm inside than we could mend. We are grateful to the beach walker who called for help, and to everyone who sent kind words while Luz was with us. Luz’s story is one we tell at every school visit, in the hope that fewer turtles will need our help.',
		summary:
			'Luz arrived thin and weak after swallowing pieces of plastic bag and balloon ribbon. Our team gave round-the-clock care, and for a while Luz began to eat again.',
		heroImage: '/demo/memorial.svg',
		heroAlt: 'Illustration of a green turtle resting on a warm sand-coloured background',
		strandingLatitude: '17.978800',
		strandingLongitude: '-66.303000',
		strandingPlace: 'Swimming beach by the river mouth',
		flipperTags: ['TWD-0402'],
		microchip: '999000000040208',
		medicalNotes:
			'Severe emaciation, anaemia; plastic bag fragments and ribbon in faeces. Died day 22; necropsy: intestinal perforation and peritonitis.',
		agencyCaseNumber: 'ARV-26-0029'
	},
	{
		slug: 'ancla',
		name: 'Ancla',
		species: 'green',
		lifeStage: 'juvenile',
		carapaceLengthCm: '41.7',
		weightKg: '8.90',
		admittedDaysAgo: 1,
		admissionReason: 'entanglement',
		status: 'admitted',
		publicTreatment: 'hidden',
		summary:
			'Ancla came in overnight, caught in rope from a lost trap. The team is still assessing the injuries.',
		strandingLatitude: '17.968000',
		strandingLongitude: '-66.221500',
		strandingPlace: 'Reef flat off the fishermen’s beach',
		flipperTags: ['TWD-0433', 'TWD-0434'],
		microchip: '999000000043309',
		medicalNotes:
			'Rope constriction R rear flipper, deep; possible amputation. Profile hidden until the vet has seen the radiographs.',
		agencyCaseNumber: 'ARV-26-0046'
	}
];

function daysAgo(now: Date, days: number): Date {
	return new Date(now.getTime() - days * 86_400_000);
}

function calendarDay(date: Date): string {
	return date.toISOString().slice(0, 10);
}

/**
 * Loads the demo scenario into an empty database in one transaction. Refuses, rather than
 * duplicating anything, when the organisation settings row already exists.
 */
export async function seedDemo(database: Database, now: Date = new Date()): Promise<void> {
	// One hash for every demo account: argon2id is slow on purpose.
	const passwordHash = await hashPassword(DEMO_PASSWORD);

	await database.transaction(async (tx) => {
		const existing = await tx
			.select({ id: organisationSettings.id })
			.from(organisationSettings)
			.limit(1);
		if (existing.length > 0) {
			throw new Error(
				'The demo scenario is already loaded (the organisation settings exist); start from an empty database to seed it again.'
			);
		}

		const ids = new Map(DEMO_USERS.map((u) => [u.email, randomUUID()]));
		const idOf = (email: string) => ids.get(email)!;
		const adminId = idOf('ramon.admin@tideward.test');
		const educatorId = idOf('marisol.educator@tideward.test');

		await tx.insert(users).values(
			DEMO_USERS.map((u, i) => ({
				id: idOf(u.email),
				email: u.email,
				name: u.name,
				passwordHash,
				emailVerified: true,
				createdAt: daysAgo(now, 400 - i * 20),
				updatedAt: daysAgo(now, 400 - i * 20)
			}))
		);

		await tx.insert(roles).values(
			DEMO_USERS.flatMap((u) =>
				u.roles.map((role) => ({
					userId: idOf(u.email),
					role,
					grantedBy: role === 'supporter' || u.roles.includes('admin') ? null : adminId
				}))
			)
		);

		await tx.insert(organisationSettings).values({
			id: 1,
			...DEMO_ORGANISATION,
			updatedAt: daysAgo(now, 380),
			updatedBy: adminId
		});

		const patientIds = new Map(DEMO_PATIENTS.map((p) => [p.slug, randomUUID()]));
		await tx.insert(patients).values(
			DEMO_PATIENTS.map((p) => {
				const admitted = daysAgo(now, p.admittedDaysAgo);
				return {
					id: patientIds.get(p.slug)!,
					slug: p.slug,
					name: p.name,
					species: p.species,
					lifeStage: p.lifeStage,
					carapaceLengthCm: p.carapaceLengthCm,
					weightKg: p.weightKg,
					admittedOn: calendarDay(admitted),
					admissionReason: p.admissionReason,
					status: p.status,
					publicTreatment: p.publicTreatment ?? 'shown',
					memorialNote: p.memorialNote ?? null,
					summary: p.summary,
					heroImage: p.heroImage ?? null,
					heroAlt: p.heroAlt ?? null,
					strandingLatitude: p.strandingLatitude,
					strandingLongitude: p.strandingLongitude,
					strandingPlace: p.strandingPlace,
					strandedOn: calendarDay(admitted),
					flipperTags: p.flipperTags,
					microchip: p.microchip || null,
					transmitterId: p.transmitterId ?? null,
					medicalNotes: p.medicalNotes,
					agencyCaseNumber: p.agencyCaseNumber,
					createdAt: admitted,
					updatedAt: admitted
				};
			})
		);

		await tx.insert(auditLog).values([
			{
				actorId: adminId,
				action: 'settings.updated',
				subject: 'organisation',
				details: { fields: Object.keys(DEMO_ORGANISATION) },
				at: daysAgo(now, 380)
			},
			...DEMO_USERS.filter(
				(u) => !u.roles.includes('supporter') && !u.roles.includes('admin')
			).flatMap((u) =>
				u.roles.map((role) => ({
					actorId: adminId,
					action: 'role.granted',
					subject: idOf(u.email),
					details: { role },
					at: daysAgo(now, 370)
				}))
			),
			...DEMO_PATIENTS.filter((p) => p.admittedDaysAgo < 30).map((p) => ({
				actorId: educatorId,
				action: 'patient.created',
				subject: patientIds.get(p.slug)!,
				details: { name: p.name },
				at: daysAgo(now, p.admittedDaysAgo)
			})),
			{
				actorId: educatorId,
				action: 'patient.public_treatment_changed',
				subject: patientIds.get('luz')!,
				details: { from: 'shown', to: 'memorial' },
				at: daysAgo(now, 72)
			}
		]);
	});
}
