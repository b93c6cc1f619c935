import { describe, expect, it } from 'vitest';
import { availableStoryActions, refuseStoryAction, type StoryActor } from './story-rules';

const author: StoryActor = { id: 'author', roles: ['educator'] };
const colleague: StoryActor = { id: 'colleague', roles: ['educator'] };
const admin: StoryActor = { id: 'admin', roles: ['admin'] };
const tracker: StoryActor = { id: 'tracker', roles: ['tracker'] };

describe('story workflow', () => {
	it('an author submits a draft; a colleague approves it', () => {
		expect(
			availableStoryActions({
				status: 'draft',
				authorId: 'author',
				actor: author,
				reviewRequired: true
			})
		).toEqual(['submit']);
		expect(
			availableStoryActions({
				status: 'in_review',
				authorId: 'author',
				actor: author,
				reviewRequired: true
			})
		).toEqual(['send_back']);
		expect(
			availableStoryActions({
				status: 'in_review',
				authorId: 'author',
				actor: colleague,
				reviewRequired: true
			})
		).toEqual(['send_back', 'publish_now', 'schedule']);
		expect(
			availableStoryActions({
				status: 'in_review',
				authorId: 'author',
				actor: admin,
				reviewRequired: true
			})
		).toEqual(['send_back', 'publish_now', 'schedule']);
	});

	it('the author cannot approve their own story when review is required', () => {
		expect(
			refuseStoryAction('publish_now', {
				status: 'in_review',
				authorId: 'author',
				actor: author,
				reviewRequired: true
			})
		).toBe('Someone other than the author must approve this story.');
	});

	it('without review, the author may publish or schedule a draft', () => {
		expect(
			availableStoryActions({
				status: 'draft',
				authorId: 'author',
				actor: author,
				reviewRequired: false
			})
		).toEqual(['submit', 'publish_now', 'schedule']);
	});

	it('refuses out-of-order steps with a message naming the states', () => {
		expect(
			refuseStoryAction('archive', {
				status: 'draft',
				authorId: 'a',
				actor: admin,
				reviewRequired: true
			})
		).toBe('“Archive” is possible only when a story is published; this one is draft.');
		expect(
			refuseStoryAction('schedule', {
				status: 'published',
				authorId: 'a',
				actor: admin,
				reviewRequired: true
			})
		).toMatch(/only when a story is in review; this one is published/);
	});

	it('people without an education or admin role take no action', () => {
		for (const status of ['draft', 'in_review', 'scheduled', 'published', 'archived'] as const) {
			expect(
				availableStoryActions({ status, authorId: 'x', actor: tracker, reviewRequired: false })
			).toEqual([]);
		}
	});

	it('scheduled stories can be unscheduled; published archived; archived restored', () => {
		const ctx = { authorId: 'author', actor: colleague, reviewRequired: true };
		expect(availableStoryActions({ ...ctx, status: 'scheduled' })).toEqual(['unschedule']);
		expect(availableStoryActions({ ...ctx, status: 'published' })).toEqual(['archive']);
		expect(availableStoryActions({ ...ctx, status: 'archived' })).toEqual(['restore']);
	});
});
