import type { Role } from '../../roles';
import type { StoryStatus } from '../db/schema';

export type StoryAction =
	'submit' | 'send_back' | 'publish_now' | 'schedule' | 'unschedule' | 'archive' | 'restore';

export const STORY_ACTION_LABELS: Record<StoryAction, string> = {
	submit: 'Submit for review',
	send_back: 'Send back to the author',
	publish_now: 'Approve and publish now',
	schedule: 'Approve and schedule',
	unschedule: 'Unschedule (back to draft)',
	archive: 'Archive',
	restore: 'Publish again'
};

const TARGET: Record<StoryAction, StoryStatus> = {
	submit: 'in_review',
	send_back: 'draft',
	publish_now: 'published',
	schedule: 'scheduled',
	unschedule: 'draft',
	archive: 'archived',
	restore: 'published'
};

export function targetStatus(action: StoryAction): StoryStatus {
	return TARGET[action];
}

export interface StoryActor {
	id: string;
	roles: readonly Role[];
}

interface Context {
	status: StoryStatus;
	authorId: string | null;
	actor: StoryActor;
	/** Organisation setting: approval by someone other than the author. */
	reviewRequired: boolean;
}

/**
 * Why `action` may not be taken now, or null when it may. The workflow: draft → in review →
 * scheduled or published → archived. With review required, the approver (publish or schedule)
 * must be an educator or admin other than the author; without it, the author may publish a draft.
 */
export function refuseStoryAction(action: StoryAction, ctx: Context): string | null {
	const editor = ctx.actor.roles.includes('educator') || ctx.actor.roles.includes('admin');
	if (!editor) return 'Only education staff and administrators work on stories.';
	const own = ctx.authorId === ctx.actor.id;
	const approving = action === 'publish_now' || action === 'schedule';
	const from: Record<StoryAction, StoryStatus[]> = {
		submit: ['draft'],
		send_back: ['in_review'],
		publish_now: ctx.reviewRequired ? ['in_review'] : ['draft', 'in_review'],
		schedule: ctx.reviewRequired ? ['in_review'] : ['draft', 'in_review'],
		unschedule: ['scheduled'],
		archive: ['published'],
		restore: ['archived']
	};
	if (!from[action].includes(ctx.status)) {
		const where = from[action].map((s) => s.replace('_', ' ')).join(' or ');
		return `“${STORY_ACTION_LABELS[action]}” is possible only when a story is ${where}; this one is ${ctx.status.replace('_', ' ')}.`;
	}
	if (approving && ctx.reviewRequired && own) {
		return 'Someone other than the author must approve this story.';
	}
	return null;
}

/** The actions this person may take on the story now, for the editor's buttons. */
export function availableStoryActions(ctx: Context): StoryAction[] {
	return (Object.keys(TARGET) as StoryAction[]).filter((a) => refuseStoryAction(a, ctx) === null);
}

/** Drafts and stories in review can be edited; a scheduled story goes back to draft first. */
export function storyEditable(status: StoryStatus): boolean {
	return status === 'draft' || status === 'in_review' || status === 'published';
}
