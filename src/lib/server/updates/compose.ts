// What a supporter update says about its event: built once per event from public data only
// (public patient columns, the stored journey projection, published stories, the release's public
// area), then personalised per recipient. Nothing here reads positions or staff-only fields.
import { and, desc, eq } from 'drizzle-orm';
import { mediaWidthsFor, nearestWidth, mediaUrl } from '$lib/media';
import { formatDay } from '$lib/patients';
import type { Executor } from '../db';
import {
	media,
	patients,
	stories,
	storyPatients,
	type PatientEventKind,
	patientEvents
} from '../db/schema';
import type { UpdateCategory } from '../mail/preferences';
import type { TemplateName } from '../mail/templates';
import type { Recipient } from './recipients';

export const CATEGORY_OF: Record<PatientEventKind, UpdateCategory> = {
	released: 'homecoming',
	story_published: 'fieldNote',
	waypoint: 'waypoint',
	last_signal: 'lastSignal'
};

export const TEMPLATE_OF: Record<PatientEventKind, TemplateName> = {
	released: 'homecoming-update',
	story_published: 'field-note',
	waypoint: 'waypoint-update',
	last_signal: 'last-signal'
};

const CATEGORY_WORDS: Record<UpdateCategory, string> = {
	homecoming: 'homecoming updates',
	waypoint: 'waypoint updates',
	fieldNote: 'field notes',
	lastSignal: 'last-signal notes'
};

type PatientEvent = typeof patientEvents.$inferSelect;

/** The event's own variables, or a reason not to send it. */
export type Composed =
	| { send: true; vars: Record<string, string | number>; patientName: string }
	| { send: false; reason: string };

const grouped = new Intl.NumberFormat('en-US', { maximumFractionDigits: 0 });

export function formatDistance(km: number, mi: number, unit: 'km' | 'mi'): string {
	const inKm = `${grouped.format(km)} km`;
	const inMi = `${grouped.format(mi)} mi`;
	return unit === 'mi' ? `${inMi} (${inKm})` : `${inKm} (${inMi})`;
}

export async function composeEvent(
	tx: Executor,
	event: PatientEvent,
	origin: string,
	distanceUnit: 'km' | 'mi'
): Promise<Composed> {
	const [patient] = await tx
		.select({
			name: patients.name,
			slug: patients.slug,
			publicTreatment: patients.publicTreatment,
			heroImage: patients.heroImage,
			heroAlt: patients.heroAlt
		})
		.from(patients)
		.where(eq(patients.id, event.patientId));
	if (!patient) return { send: false, reason: 'the patient no longer exists' };
	if (patient.publicTreatment === 'hidden') {
		return { send: false, reason: 'staff have hidden the patient from the public' };
	}
	const patientLink = `${origin}/patients/${patient.slug}`;
	const journeyLink = `${patientLink}#journey-heading`;
	const payload = event.payload as Record<string, unknown>;
	const base = { patientName: patient.name };

	switch (event.kind) {
		case 'released': {
			const [story] = await tx
				.select({ summary: stories.summary })
				.from(stories)
				.innerJoin(storyPatients, eq(storyPatients.storyId, stories.id))
				.where(
					and(
						eq(storyPatients.patientId, event.patientId),
						eq(stories.kind, 'release'),
						eq(stories.status, 'published')
					)
				)
				.orderBy(desc(stories.publishedAt))
				.limit(1);
			let photoUrl = `${origin}/og/patients/${patient.slug}.png`;
			let photoAlt = `${patient.name}, a patient of the hospital`;
			if (patient.heroImage) {
				const [photo] = await tx
					.select({ width: media.width, alt: media.alt })
					.from(media)
					.where(eq(media.id, patient.heroImage));
				if (photo) {
					const width = nearestWidth(mediaWidthsFor(photo.width), 960);
					photoUrl = `${origin}${mediaUrl(patient.heroImage, width, 'jpeg')}`;
					photoAlt = patient.heroAlt || photo.alt || photoAlt;
				}
			}
			return {
				send: true,
				patientName: patient.name,
				vars: {
					...base,
					releaseDate:
						typeof payload.releaseOn === 'string' ? formatDay(payload.releaseOn) : 'recently',
					releaseArea: typeof payload.publicArea === 'string' ? payload.publicArea : 'the sea',
					releaseStory: story?.summary ?? '',
					photoUrl,
					photoAlt,
					patientLink
				}
			};
		}
		case 'waypoint': {
			const km = Number(payload.distanceKm);
			const mi = Number(payload.distanceMi);
			const asOf = typeof payload.cutoffDate === 'string' ? formatDay(payload.cutoffDate) : '';
			if (!Number.isFinite(km) || !Number.isFinite(mi) || !asOf) {
				return { send: false, reason: 'the waypoint has no public distance' };
			}
			const distance = formatDistance(km, mi, distanceUnit);
			return {
				send: true,
				patientName: patient.name,
				vars: {
					...base,
					distance,
					daysSinceRelease: Number(payload.daysSinceRelease ?? 0),
					asOf,
					mapUrl: `${origin}/patients/${patient.slug}/journey.png`,
					mapAlt: `Map of ${patient.name}’s journey up to ${asOf}: about ${distance} travelled.`,
					journeyLink
				}
			};
		}
		case 'story_published': {
			const [story] = await tx
				.select({ title: stories.title, summary: stories.summary, slug: stories.slug })
				.from(stories)
				.where(and(eq(stories.id, String(payload.storyId ?? '')), eq(stories.status, 'published')));
			if (!story) return { send: false, reason: 'the story is no longer published' };
			return {
				send: true,
				patientName: patient.name,
				vars: {
					...base,
					storyTitle: story.title,
					storyExcerpt: story.summary,
					storyLink: `${origin}/stories/${story.slug}`
				}
			};
		}
		case 'last_signal': {
			if (!event.message || !event.approvedAt) {
				return { send: false, reason: 'waiting for the staff’s note' };
			}
			return {
				send: true,
				patientName: patient.name,
				vars: { ...base, farewell: event.message, journeyLink }
			};
		}
	}
}

/** The footer line saying why this address gets the update. */
export function reasonFor(recipient: Recipient, category: UpdateCategory, patientName: string) {
	const what = CATEGORY_WORDS[category];
	switch (recipient.relation) {
		case 'adopted':
			return `You receive ${what} because you adopted ${patientName}.`;
		case 'gift':
			return `You receive ${what} because ${patientName} was adopted for you.`;
		case 'classroom':
			return `You receive ${what} because your class adopted ${patientName}.`;
		case 'followed':
			return `You receive ${what} because you chose to keep following ${patientName}.`;
	}
}
