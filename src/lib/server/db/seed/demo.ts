import { and, eq, isNull } from 'drizzle-orm';
import { randomUUID } from 'node:crypto';
import { hashPassword } from '../../auth/password';
import { recomputeJourney } from '../../journeys/recompute';
import { renderMarkdown } from '../../newsroom/markdown';
import { syntheticTrack } from '../../tracking/synthetic';
import type { Database } from '../index';
import {
	adoptionLevels,
	auditLog,
	organisationSettings,
	patientEvents,
	patients,
	patientStatusLog,
	positions,
	releases,
	roles,
	stories,
	storyPatients,
	users,
	type AdmissionReason,
	type LifeStage,
	type PatientStatus,
	type ReleaseHabitat,
	type Role,
	type Species,
	type StoryKind,
	type StoryStatus
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

/**
 * Each patient's status history, oldest first: [status, days ago, note]. The last entry is the
 * patient's current status; the first is the admission.
 */
const DEMO_STATUS_HISTORY: Record<string, [PatientStatus, number, string | null][]> = {
	brisa: [
		['admitted', 74, null],
		['in_rehabilitation', 71, 'Eating on her own; first surgery planned.']
	],
	coralina: [
		['admitted', 58, null],
		['in_rehabilitation', 56, 'Wound cleaned and dressed; swimming in the shallow pool.'],
		['ready_for_release', 6, 'Flipper healed; dives and feeds normally.']
	],
	timon: [
		['admitted', 121, null],
		['in_rehabilitation', 115, 'Shell fractures stabilised.']
	],
	perla: [
		['admitted', 210, null],
		['in_rehabilitation', 207, 'Rehydrated; flipper wounds superficial.'],
		['ready_for_release', 170, 'Strong and diving well.'],
		['released', 165, 'Release done: off the south coast']
	],
	centella: [['admitted', 3, null]],
	gota: [
		['admitted', 40, null],
		['ready_for_release', 38, 'Rested, swimming hard; ready for the weed line.'],
		['released', 37, 'Release done: offshore, beyond the western bays']
	],
	faro: [
		['admitted', 912, null],
		['in_rehabilitation', 905, 'Shell wound closing.'],
		['permanent_resident', 700, 'Cannot dive: vet and agency agree Faro stays with us.']
	],
	marea: [['admitted', 9, null]],
	luz: [
		['admitted', 95, null],
		['in_rehabilitation', 93, 'Eating small meals.'],
		['died', 73, null]
	],
	ancla: [['admitted', 1, null]]
};

interface DemoRelease {
	patient: string;
	/** Days from the day of seeding: negative in the past, positive for a plan. */
	releaseInDays: number;
	publicArea: string;
	habitat: ReleaseHabitat;
	siteLatitude: string;
	siteLongitude: string;
	siteNotes: string;
	authorisationRef: string | null;
	vetClearedBy: string;
	vetClearedInDays: number;
	transmitterAttached: boolean;
	done: boolean;
}

// Release sites and paperwork are staff only; the public sees the area name and the day.
const DEMO_RELEASES: DemoRelease[] = [
	{
		patient: 'perla',
		releaseInDays: -165,
		publicArea: 'off the south coast',
		habitat: 'other',
		siteLatitude: '17.887400',
		siteLongitude: '-66.703900',
		siteNotes: 'Open water beyond the reef edge; launched from the hospital skiff at 07:40.',
		authorisationRef: 'ARV-REL-25-0141',
		vetClearedBy: 'Dr. Inés Cardona Ríos',
		vetClearedInDays: -168,
		transmitterAttached: true,
		done: true
	},
	{
		patient: 'gota',
		releaseInDays: -37,
		publicArea: 'offshore, beyond the western bays',
		habitat: 'offshore_weed_line',
		siteLatitude: '17.874100',
		siteLongitude: '-67.051700',
		siteNotes: 'Sargassum line about 8 km out; released by hand at dawn, calm sea.',
		authorisationRef: 'ARV-REL-26-0036',
		vetClearedBy: 'Dr. Inés Cardona Ríos',
		vetClearedInDays: -38,
		transmitterAttached: false,
		done: true
	},
	{
		patient: 'coralina',
		releaseInDays: 5,
		publicArea: 'off the southwest reefs',
		habitat: 'other',
		siteLatitude: '17.932600',
		siteLongitude: '-66.928800',
		siteNotes: 'Patch reef inside the shelf edge; boat from the west ramp. Waiting on the agency.',
		authorisationRef: null,
		vetClearedBy: 'Dr. Aurelio Santini Vega',
		vetClearedInDays: -6,
		transmitterAttached: false,
		done: false
	}
];

interface DemoStory {
	slug: string;
	title: string;
	kind: StoryKind;
	status: StoryStatus;
	/** Days before the day of seeding it was published (or last edited, when not published). */
	daysAgo: number;
	patients: string[];
	summary: string;
	body: string;
}

const DEMO_STORIES: DemoStory[] = [
	{
		slug: 'centella-a-rare-visitor-with-a-hook',
		title: 'Centella, a rare visitor, arrives with a swallowed hook',
		kind: 'admission',
		status: 'published',
		daysAgo: 2,
		patients: ['centella'],
		summary:
			'A young Kemp’s ridley, far from the waters where its kind usually lives, came in this week with a fishing hook in its throat.',
		body: `Licensed responders brought us a small turtle this week, and the whole team stopped to look: **Centella is a Kemp’s ridley**, the rarest sea turtle in the world, and one we almost never see this far south.

Centella had swallowed a fishing hook. An X-ray showed exactly where it sits, and our vets are now planning the gentlest way to take it out, using a slim camera and long forceps so that no surgery is needed.

## What happens next

- Centella rests in a quiet, shaded tank and is kept warm and calm.
- The team checks breathing, appetite and blood values every day.
- Once the hook is out, Centella will start on small meals of crab and fish.

If you fish from a pier or a boat and hook a turtle by accident, **do not cut the line short or pull the hook**. Keep the turtle still if you safely can and call the wildlife hotline: a responder can take it out properly and a short line is much harder to treat.`
	},
	{
		slug: 'brisa-can-see-the-seagrass-again',
		title: 'Brisa can see the seagrass again',
		kind: 'progress',
		status: 'published',
		daysAgo: 20,
		patients: ['brisa'],
		summary:
			'After two operations to remove the growths around her eyes, our young green turtle is finding her own food.',
		body: `When Brisa arrived, soft growths covered much of both eyes. They are caused by **fibropapillomatosis**, a tumour disease that affects many green turtles in warm coastal waters, and they had made it hard for her to find food.

Our vets have now removed the growths in two short operations. The change has been wonderful to watch: Brisa glides to the seagrass and lettuce we place in the pool and eats without any help.

> “The first morning she went straight for the seagrass, we all cheered at the window.” — one of our animal care volunteers

The disease can come back, so Brisa will have check-ups and blood tests every few weeks. If those stay clear, we will start talking about her release.`
	},
	{
		slug: 'timon-one-shell-patch-at-a-time',
		title: 'Timón, one shell patch at a time',
		kind: 'progress',
		status: 'published',
		daysAgo: 30,
		patients: ['timon'],
		summary:
			'Four months after a boat strike, our loggerhead is diving to the bottom of the deep pool.',
		body: `A boat propeller left Timón with three deep cuts across the back of the shell. Shells are living bone, and bone heals slowly, so this has been a long stay.

Here is where things stand:

1. The fractures are stable and covered with new, healthy tissue.
2. Timón no longer floats at the surface, a common problem after a strike.
3. This month Timón dived to the bottom of our deepest pool for the first time.

There is still a way to go before release, and we will keep sharing the small steps. If you boat near the coast, slowing down in shallow water gives turtles time to dive out of the way.`
	},
	{
		slug: 'faro-our-resident-ambassador',
		title: 'A morning with Faro, our resident ambassador',
		kind: 'general',
		status: 'published',
		daysAgo: 48,
		patients: ['faro', 'coralina'],
		summary:
			'Faro cannot go back to the sea, but helps hundreds of school visitors understand why slowing down on the water matters.',
		body: `Faro has lived with us for more than two years. After a boat strike, air gets trapped under Faro’s shell, and a turtle that cannot dive cannot feed or escape danger in the wild. The vet and the wildlife agency agreed: Faro stays with us for good.

Faro’s day starts with a health check, then breakfast of greens, then a visit from whichever school group is with us that morning. Children watch Faro tilt and float, and then we talk about what they could do to help.

In the next pool, the young hawksbill **Coralina** is the opposite story: after weeks of care for a flipper cut by fishing line, she is nearly ready to go home. Seeing the two of them side by side says more than any poster could.`
	},
	{
		slug: 'perla-swims-home',
		title: 'Perla swims home past the reef',
		kind: 'release',
		status: 'published',
		daysAgo: 165,
		patients: ['perla'],
		summary:
			'Six weeks after we cut her free of a drifting net, Perla went back to the sea with a satellite transmitter on her shell.',
		body: `This morning the team carried Perla, our olive ridley, onto the skiff and took her out to open water off the south coast. She paused at the surface for a breath, then dived and was gone.

Perla came to us wrapped in a drifting *ghost net* with both front flippers bound. Six weeks of wound care, good food and strength-building later, the vet cleared her for release and the wildlife agency authorised it.

Perla carries a small **satellite transmitter**. Each time she surfaces it can send a position, and we will share her journey here, always a week or more behind and never as an exact spot, so that she can travel undisturbed.

Thank you to everyone who followed her recovery.`
	},
	{
		slug: 'perla-first-weeks-at-sea',
		title: 'Perla’s first weeks at sea',
		kind: 'journey',
		status: 'published',
		daysAgo: 120,
		patients: ['perla'],
		summary: 'Her transmitter has checked in regularly since release, and she is travelling well.',
		body: `Since her release, Perla’s transmitter has reached a satellite most days. That alone is good news: it means she is surfacing to breathe normally and moving with purpose.

Olive ridleys spend much of their lives in the open ocean, and Perla is behaving like one. We share her journey with a delay and only as broad areas, so the details here are deliberately general.

We will post again when she passes her first long-distance milestone.`
	},
	{
		slug: 'gota-heads-for-the-weed-line',
		title: 'Tiny Gota heads for the weed line',
		kind: 'release',
		status: 'published',
		daysAgo: 37,
		patients: ['gota'],
		summary:
			'A leatherback hatchling that was found weak on the beach is back at sea after two days of rest.',
		body: `Gota weighed about as much as a hen’s egg when a beach walker spotted the hatchling tangled in seaweed at the tideline, long after its nestmates had reached the water.

After two days of rest and observation, Gota was swimming hard and ready. The team took the hatchling offshore, beyond the western bays, to the floating lines of seaweed where young leatherbacks find shelter and food, and let it go by hand.

If you see hatchlings on the beach, give them room, keep lights off, and let them make their own way to the sea. If one is stranded, heading inland or hurt, call the wildlife hotline.`
	},
	{
		slug: 'marea-and-the-plastic-problem',
		title: 'Marea and the plastic problem',
		kind: 'admission',
		status: 'published',
		daysAgo: 8,
		patients: ['marea', 'ancla'],
		summary:
			'A young hawksbill was found floating and unable to dive, with swallowed plastic blocking its gut.',
		body: `Marea was found floating and unable to dive. X-rays showed why: pieces of plastic were blocking the gut.

The treatment is patient work: fluids, gentle feeding and time. Two pieces of plastic have passed so far, and each day Marea shows a little more appetite.

Turtles mistake drifting plastic for food. Every bag, balloon and scrap kept off the beach is one less that can end up in a turtle like Marea.`
	},
	{
		slug: 'coralina-release-day-plans',
		title: 'Getting ready for Coralina’s release day',
		kind: 'release',
		status: 'draft',
		daysAgo: 1,
		patients: ['coralina'],
		summary: 'Draft: what happens on the morning a turtle goes home.',
		body: `Draft notes for the release story. Add photos from the skiff once the agency has answered.`
	},
	{
		slug: 'faro-tries-a-new-harness',
		title: 'Faro tries a new harness',
		kind: 'progress',
		status: 'in_review',
		daysAgo: 2,
		patients: ['faro'],
		summary: 'Small weights may help Faro swim level. Early days.',
		body: `Our team is testing a soft harness with small weights that may help Faro swim level. It is early days, and Faro sets the pace.`
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

		await tx.insert(patientStatusLog).values(
			DEMO_PATIENTS.flatMap((p) => {
				const history = DEMO_STATUS_HISTORY[p.slug] ?? [[p.status, p.admittedDaysAgo, null]];
				return history.map(([status, days, note], i) => ({
					patientId: patientIds.get(p.slug)!,
					fromStatus: i === 0 ? null : history[i - 1][0],
					toStatus: status,
					note,
					changedBy: educatorId,
					changedAt: daysAgo(now, days)
				}));
			})
		);

		const releaseIds = new Map(DEMO_RELEASES.map((r) => [r.patient, randomUUID()]));
		await tx.insert(releases).values(
			DEMO_RELEASES.map((r) => {
				const releaseDay = daysAgo(now, -r.releaseInDays);
				return {
					id: releaseIds.get(r.patient)!,
					patientId: patientIds.get(r.patient)!,
					releaseOn: calendarDay(releaseDay),
					publicArea: r.publicArea,
					habitat: r.habitat,
					siteLatitude: r.siteLatitude,
					siteLongitude: r.siteLongitude,
					siteNotes: r.siteNotes,
					authorisationRef: r.authorisationRef,
					vetClearedBy: r.vetClearedBy,
					vetClearedOn: calendarDay(daysAgo(now, -r.vetClearedInDays)),
					transmitterAttached: r.transmitterAttached,
					doneAt: r.done ? releaseDay : null,
					doneBy: r.done ? educatorId : null,
					createdAt: daysAgo(now, -r.vetClearedInDays + 2),
					updatedAt: r.done ? releaseDay : daysAgo(now, -r.vetClearedInDays)
				};
			})
		);

		const storyIds = new Map(DEMO_STORIES.map((st) => [st.slug, randomUUID()]));
		const reviewerId = idOf('celeste.staff@tideward.test');
		await tx.insert(stories).values(
			DEMO_STORIES.map((st) => {
				const at = daysAgo(now, st.daysAgo);
				const published = st.status === 'published';
				return {
					id: storyIds.get(st.slug)!,
					slug: st.slug,
					title: st.title,
					kind: st.kind,
					summary: st.summary,
					bodyMarkdown: st.body,
					bodyHtml: renderMarkdown(st.body),
					status: st.status,
					authorId: educatorId,
					approvedBy: published ? reviewerId : null,
					approvedAt: published ? daysAgo(now, st.daysAgo + 0.1) : null,
					publishedAt: published ? at : null,
					createdAt: daysAgo(now, st.daysAgo + 1),
					updatedAt: at
				};
			})
		);
		await tx.insert(storyPatients).values(
			DEMO_STORIES.flatMap((st) =>
				st.patients.map((slug) => ({
					storyId: storyIds.get(st.slug)!,
					patientId: patientIds.get(slug)!
				}))
			)
		);

		// The demo's history has already been told: its events are marked processed so that no
		// homecoming update or field note goes out for them.
		const shownPatients = new Set(
			DEMO_PATIENTS.filter(
				(p) => (p.publicTreatment ?? 'shown') === 'shown' && p.status !== 'died'
			).map((p) => p.slug)
		);
		await tx.insert(patientEvents).values([
			...DEMO_RELEASES.filter((r) => r.done).map((r) => {
				const at = daysAgo(now, -r.releaseInDays);
				return {
					patientId: patientIds.get(r.patient)!,
					kind: 'released' as const,
					dedupeKey: `released:${releaseIds.get(r.patient)}`,
					payload: {
						releaseOn: calendarDay(at),
						publicArea: r.publicArea,
						habitat: r.habitat
					},
					occurredAt: at,
					processedAt: at
				};
			}),
			...DEMO_STORIES.filter((st) => st.status === 'published').flatMap((st) =>
				st.patients
					.filter((slug) => shownPatients.has(slug))
					.map((slug) => {
						const at = daysAgo(now, st.daysAgo);
						return {
							patientId: patientIds.get(slug)!,
							kind: 'story_published' as const,
							dedupeKey: `story_published:${storyIds.get(st.slug)}:${patientIds.get(slug)}`,
							payload: {
								storyId: storyIds.get(st.slug),
								slug: st.slug,
								title: st.title,
								kind: st.kind
							},
							occurredAt: at,
							processedAt: at
						};
					})
			)
		]);

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

		// Adoption levels (staff can edit them; amounts in cents, fair market value set by staff).
		await tx.insert(adoptionLevels).values([
			{
				id: randomUUID(),
				slug: 'ripple',
				name: 'Ripple',
				description: 'A digital adoption: certificate, photo and news of your patient by e-mail.',
				amountCents: 2500,
				interval: 'once' as const,
				kind: 'individual' as const,
				position: 1
			},
			{
				id: randomUUID(),
				slug: 'swell',
				name: 'Swell',
				description: 'A monthly adoption with a keepsake kit sent once by post.',
				amountCents: 1500,
				interval: 'month' as const,
				kind: 'individual' as const,
				goods: 'a keepsake kit (plush turtle and printed photo)',
				fairMarketValueCents: 1200,
				position: 2
			},
			{
				id: randomUUID(),
				slug: 'reef-classroom',
				name: 'Reef Classroom',
				description: 'An adoption for a class, with a lesson pack and a certificate for the wall.',
				amountCents: 6000,
				interval: 'once' as const,
				kind: 'classroom' as const,
				goods: 'a printed lesson pack',
				fairMarketValueCents: 800,
				position: 3
			}
		]);

		// Perla's transmitter: an invented, seeded track drifting west-south-west across the
		// Caribbean since her release, with some poor fixes and outliers for the cleaning to show.
		const perlaId = patientIds.get('perla')!;
		const perla = DEMO_PATIENTS.find((p) => p.slug === 'perla')!;
		const perlaRelease = DEMO_RELEASES.find((r) => r.patient === 'perla')!;
		const track = syntheticTrack({
			seed: 7,
			start: { lat: Number(perlaRelease.siteLatitude), lon: Number(perlaRelease.siteLongitude) },
			startTime: daysAgo(now, -perlaRelease.releaseInDays).getTime() + 3_600_000,
			days: -perlaRelease.releaseInDays - 1,
			fixesPerDay: 6,
			headingDeg: 250,
			speedKmh: 0.4,
			zFraction: 0.03,
			spikeFraction: 0.02,
			idPrefix: 'perla'
		});
		for (let i = 0; i < track.fixes.length; i += 1000) {
			await tx.insert(positions).values(
				track.fixes.slice(i, i + 1000).map((f) => ({
					patientId: perlaId,
					transmitterId: perla.transmitterId!,
					observedAt: new Date(f.time),
					latitude: Number(f.lat.toFixed(5)),
					longitude: Number(f.lon.toFixed(5)),
					locationClass: f.lc
				}))
			);
		}
		await recomputeJourney(tx, perlaId, now.getTime());
		// Already told, like the rest of the demo's history.
		await tx
			.update(patientEvents)
			.set({ processedAt: now })
			.where(and(eq(patientEvents.patientId, perlaId), isNull(patientEvents.processedAt)));
	});
}
