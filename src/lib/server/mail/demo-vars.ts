// Invented, realistic values for every e-mail template, for the staff preview
// (/staff/mail/templates) and the template screenshots. People and patients follow the demo
// scenario; the links point at this site, and the ones that would act on an account (sign-in,
// unsubscribe, a gift claim) carry a token that matches nothing.
import { formatDay } from '$lib/patients';
import { INVITE_DAYS, PASSWORD_RESET_MINUTES, SIGN_IN_LINK_MINUTES } from '../config';
import { db } from '../db';
import { formatReceiptNumber, receiptRules } from '../ledger/receipts';
import { formatUtc } from './mailbox';
import {
	organisationVars,
	type CommonVars,
	type TEMPLATE_VARIABLES,
	type TemplateName,
	type TemplateVars
} from './templates';

type OwnVars<N extends TemplateName> = Record<
	(typeof TEMPLATE_VARIABLES)[N][number],
	string | number
>;

interface DemoContext {
	org: CommonVars;
	site: string;
	now: Date;
	/** The calendar day `days` before `now`, as "YYYY-MM-DD". */
	day: (days: number) => string;
}

const PREVIEW_TOKEN = 'preview-only-not-a-real-token';
const KM_PER_MILE = 1.609344; // the international mile (1959 agreement), exactly
const grouped = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });

function distanceText(km: number): string {
	return `${grouped.format(km)} km (${grouped.format(km / KM_PER_MILE)} mi)`;
}

function updateLinks({ site }: DemoContext) {
	return {
		unsubscribeLink: `${site}/api/unsubscribe/${PREVIEW_TOKEN}`,
		preferencesLink: `${site}/account#preferences-heading`
	};
}

// Perla, the demo's olive ridley: released 165 days before the day of seeding, with a transmitter.
const PERLA_RELEASED_DAYS_AGO = 165;
const PUBLIC_DELAY_DAYS = 7;

const DEMO: { [N in TemplateName]: (ctx: DemoContext) => OwnVars<N> } = {
	'sign-in-link': ({ site }) => ({
		name: 'Dolores Ventura Isern',
		link: `${site}/signin/link/${PREVIEW_TOKEN}`,
		minutes: SIGN_IN_LINK_MINUTES
	}),
	'password-reset': ({ site }) => ({
		name: 'Dolores Ventura Isern',
		link: `${site}/reset/${PREVIEW_TOKEN}`,
		minutes: PASSWORD_RESET_MINUTES
	}),
	'staff-invite': ({ site }) => ({
		name: 'Noemí Castillo Rivera',
		inviterName: 'Ramón Ilarraza Cintrón',
		link: `${site}/invite/${PREVIEW_TOKEN}`,
		days: INVITE_DAYS
	}),
	'test-message': ({ now }) => ({ name: 'Ramón Ilarraza Cintrón', sentAt: formatUtc(now) }),
	'gift-receipt': ({ org, site, now, day }) => {
		const rules = receiptRules('US');
		const number = 1042;
		const terms = rules.terms({
			amountCents: 40_00,
			fairMarketValueCents: 0,
			goodsDescription: '',
			tokenItem: false,
			paidAt: now
		});
		const wording = rules.wording(terms, {
			organisation: { legalName: '', displayName: org.orgName },
			donorName: 'Kwame Osei Marín',
			number
		});
		return {
			name: 'Kwame Osei Marín',
			email: 'kwame.supporter@tideward.test',
			patientName: 'Coralina',
			levelName: 'Ripple',
			amount: '$40.00',
			giftDate: day(0),
			intro: 'Thank you for standing with the patients in our care.',
			receiptNumber: formatReceiptNumber(number),
			receiptText: rules.plainText(wording),
			accountLink: `${site}/account`
		};
	},
	receipt: ({ org, site, now }) => {
		const rules = receiptRules('US');
		const number = 1043;
		const terms = rules.terms({
			amountCents: 150_00,
			fairMarketValueCents: 0,
			goodsDescription: '',
			tokenItem: false,
			paidAt: now
		});
		const wording = rules.wording(terms, {
			organisation: { legalName: '', displayName: org.orgName },
			donorName: 'Dolores Ventura Isern',
			number
		});
		return {
			name: 'Dolores Ventura Isern',
			email: 'dolores.supporter@tideward.test',
			amount: '$150.00',
			receiptNumber: formatReceiptNumber(number),
			receiptText: rules.plainText(wording),
			accountLink: `${site}/account`
		};
	},
	'year-end-statement': ({ site }) => ({
		name: 'Dolores Ventura Isern',
		year: 2026,
		statementText: [
			'Gifts received in 2026:',
			'No. 001042  2026-03-04  Swell adoption of Perla, monthly gift: $15.00, deductible $3.00',
			'No. 001101  2026-04-04  Swell adoption of Perla, monthly gift: $15.00, deductible $15.00',
			'',
			'Total given: $30.00',
			'Total deductible (as stated on each receipt): $18.00'
		].join('\n'),
		accountLink: `${site}/account`
	}),
	'monthly-gift-failed': ({ site }) => ({
		name: 'Aiko Brandt Lugo',
		patientName: 'Timón',
		amount: '$15.00',
		reason: 'Your card was declined.',
		link: `${site}/account`
	}),
	'gift-notice': ({ site }) => ({
		recipientName: 'Inés Quiñones',
		giverName: 'Tomás Quiñones Vela',
		patientName: 'Brisa',
		giftMessage:
			'Happy birthday, Inés! Brisa can see the seagrass again, and I thought of you straight away.',
		claimLink: `${site}/gifts/${PREVIEW_TOKEN}`,
		patientLink: `${site}/patients/brisa`
	}),
	'homecoming-update': (ctx) => ({
		name: 'Dolores Ventura Isern',
		patientName: 'Perla',
		releaseDate: formatDay(ctx.day(PERLA_RELEASED_DAYS_AGO)),
		releaseArea: 'off the south coast',
		releaseStory:
			'Six weeks after we cut her free of a drifting net, Perla went back to the sea with a satellite transmitter on her shell.',
		photoUrl: `${ctx.site}/og/patients/perla.png`,
		photoAlt: 'Perla, an olive ridley sea turtle',
		patientLink: `${ctx.site}/patients/perla`,
		reason: 'You receive homecoming updates because you adopted Perla.',
		...updateLinks(ctx)
	}),
	'waypoint-update': (ctx) => {
		const asOf = formatDay(ctx.day(PUBLIC_DELAY_DAYS));
		const distance = distanceText(1500);
		return {
			name: 'Dolores Ventura Isern',
			patientName: 'Perla',
			distance,
			daysSinceRelease: PERLA_RELEASED_DAYS_AGO - PUBLIC_DELAY_DAYS,
			asOf,
			mapUrl: `${ctx.site}/patients/perla/journey.png`,
			mapAlt: `Map of Perla’s journey up to ${asOf}: about ${distance} travelled.`,
			journeyLink: `${ctx.site}/patients/perla#journey-heading`,
			reason: 'You receive waypoint updates because you adopted Perla.',
			...updateLinks(ctx)
		};
	},
	'field-note': (ctx) => ({
		name: 'Inés Quiñones',
		patientName: 'Brisa',
		storyTitle: 'Brisa can see the seagrass again',
		storyExcerpt:
			'After two operations to remove the growths around her eyes, our young green turtle is finding her own food.',
		storyLink: `${ctx.site}/stories/brisa-can-see-the-seagrass-again`,
		reason: 'You receive field notes because Brisa was adopted for you.',
		...updateLinks(ctx)
	}),
	'last-signal': (ctx) => ({
		name: 'Dolores Ventura Isern',
		patientName: 'Perla',
		farewell:
			'For more than five months, Perla’s transmitter checked in whenever she came up to breathe, and each position it sent showed us a little more of where olive ridleys go after they leave our coast.\n\nIt has been a joy to share her travels with you, from the day she came in wrapped in a net to her last mile on the map.\n\nMarisol and the education team',
		journeyLink: `${ctx.site}/patients/perla#journey-heading`,
		reason: 'You receive last-signal notes because you adopted Perla.',
		...updateLinks(ctx)
	})
};

/** Demo values for one template with the given organisation variables (no database needed). */
export function demoTemplateVars<N extends TemplateName>(
	name: N,
	org: CommonVars,
	now: Date = new Date()
): TemplateVars<N> {
	const day = (days: number) =>
		new Date(now.getTime() - days * 86_400_000).toISOString().slice(0, 10);
	const own = (DEMO[name] as (ctx: DemoContext) => OwnVars<N>)({
		org,
		site: org.siteUrl,
		now,
		day
	});
	return { ...org, ...own } as TemplateVars<N>;
}

/** Demo values for one template, with this organisation's name, postal address and site. */
export async function demoVarsFor<N extends TemplateName>(name: N): Promise<TemplateVars<N>> {
	return demoTemplateVars(name, await organisationVars(db()));
}
