// Words and formats for stories, shared by server and browser (type-only schema import, as in
// $lib/patients: a new kind without a label here fails to compile).
import type { StoryKind } from '$lib/server/db/schema';
import { formatLongDateUtc } from './format';

export const STORY_KIND_LABELS: Record<StoryKind, string> = {
	admission: 'Admission',
	progress: 'Progress',
	release: 'Release',
	journey: 'Journey',
	general: 'News'
};

/** Plural headings for the stories page's filter. */
export const STORY_KIND_PLURALS: Record<StoryKind, string> = {
	admission: 'Admissions',
	progress: 'Progress notes',
	release: 'Releases',
	journey: 'Journeys',
	general: 'News'
};

/** The day a story was published, read in UTC on server and browser alike (no Intl: $lib/format). */
export function formatPublished(at: Date | string): string {
	return formatLongDateUtc(typeof at === 'string' ? new Date(at) : at);
}

/** 'YYYY-MM-DD' for a <time datetime>. */
export function isoDay(at: Date | string): string {
	return (typeof at === 'string' ? new Date(at) : at).toISOString().slice(0, 10);
}
