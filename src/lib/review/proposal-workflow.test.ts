import { describe, expect, test } from 'vitest';
import { availableCommands, decide, type Actor, type ProposalSnapshot } from './proposal-workflow';

const author: Actor = { id: 'author', canReview: true };
const reviewerA: Actor = { id: 'rev-a', canReview: true };
const reviewerB: Actor = { id: 'rev-b', canReview: true };
const bystander: Actor = { id: 'reader', canReview: false };

const inReview = (overrides: Partial<ProposalSnapshot> = {}): ProposalSnapshot => ({
	state: 'in_review',
	authorId: 'author',
	approvals: [],
	requiredApprovals: 1,
	baseVersion: 2,
	currentVersion: 2,
	...overrides
});

describe('proposal workflow', () => {
	test.each([
		['draft', 'submit', author, 'in_review'],
		['changes_requested', 'submit', author, 'in_review'],
		['in_review', 'request_changes', reviewerA, 'changes_requested'],
		['in_review', 'reject', reviewerA, 'rejected'],
		['draft', 'withdraw', author, 'withdrawn'],
		['in_review', 'withdraw', author, 'withdrawn'],
		['changes_requested', 'withdraw', author, 'withdrawn']
	] as const)('%s --%s--> %s', (state, command, actor, next) => {
		const decision = decide(inReview({ state }), command, actor);
		expect(decision).toMatchObject({ allowed: true, next });
	});

	test.each([
		['in_review', 'approve', author, 'own_proposal'],
		['in_review', 'approve', bystander, 'not_reviewer'],
		['draft', 'approve', reviewerA, 'wrong_state'],
		['changes_requested', 'reject', reviewerA, 'wrong_state'],
		['in_review', 'submit', author, 'wrong_state'],
		['draft', 'submit', reviewerA, 'not_author'],
		['in_review', 'withdraw', reviewerA, 'not_author'],
		['approved', 'withdraw', author, 'decided'],
		['rejected', 'submit', author, 'decided'],
		['withdrawn', 'approve', reviewerA, 'decided']
	] as const)('%s: %s by %s is refused (%s)', (state, command, actor, code) => {
		expect(decide(inReview({ state }), command, actor)).toMatchObject({ allowed: false, code });
	});

	test('one approval freezes the next version when one is required', () => {
		expect(decide(inReview(), 'approve', reviewerA)).toEqual({
			allowed: true,
			next: 'approved',
			approvals: ['rev-a'],
			freezesVersion: 3
		});
	});

	test('a relation’s first approved proposal becomes version 1', () => {
		const first = inReview({ baseVersion: null, currentVersion: null });
		expect(decide(first, 'approve', reviewerA)).toMatchObject({ next: 'approved', freezesVersion: 1 });
	});

	test('two required approvals need two distinct reviewers', () => {
		const proposal = inReview({ requiredApprovals: 2 });
		const first = decide(proposal, 'approve', reviewerA);
		expect(first).toMatchObject({ allowed: true, next: 'in_review', approvals: ['rev-a'], freezesVersion: null });
		const again = decide({ ...proposal, approvals: ['rev-a'] }, 'approve', reviewerA);
		expect(again).toMatchObject({ allowed: false, code: 'already_approved' });
		const second = decide({ ...proposal, approvals: ['rev-a'] }, 'approve', reviewerB);
		expect(second).toMatchObject({ allowed: true, next: 'approved', freezesVersion: 3 });
	});

	test('a stale base blocks approval until the author rebases, and rebasing clears approvals', () => {
		const stale = inReview({ baseVersion: 2, currentVersion: 3, approvals: ['rev-a'], requiredApprovals: 2 });
		expect(decide(stale, 'approve', reviewerB)).toMatchObject({ allowed: false, code: 'stale_base' });
		expect(decide(stale, 'rebase', reviewerB)).toMatchObject({ allowed: false, code: 'not_author' });
		expect(decide(stale, 'rebase', author)).toEqual({
			allowed: true,
			next: 'in_review',
			approvals: [],
			freezesVersion: null
		});
		expect(decide(inReview(), 'rebase', author)).toMatchObject({ allowed: false, code: 'not_stale' });
	});

	test('edits are the author’s, only in draft or after changes were requested, and clear approvals', () => {
		expect(decide(inReview({ state: 'draft' }), 'edit', author)).toMatchObject({
			allowed: true,
			next: 'draft',
			approvals: []
		});
		expect(decide(inReview(), 'edit', author)).toMatchObject({ allowed: false, code: 'wrong_state' });
		expect(decide(inReview({ state: 'changes_requested' }), 'edit', reviewerA)).toMatchObject({
			allowed: false,
			code: 'not_author'
		});
	});

	test('comments are open in every open state and closed once decided', () => {
		expect(decide(inReview({ approvals: ['rev-a'] }), 'comment', bystander)).toMatchObject({
			allowed: true,
			next: 'in_review',
			approvals: ['rev-a']
		});
		expect(decide(inReview({ state: 'rejected' }), 'comment', bystander)).toMatchObject({
			allowed: false,
			code: 'decided'
		});
	});

	test('requesting changes discards earlier approvals', () => {
		const decision = decide(inReview({ approvals: ['rev-a'], requiredApprovals: 2 }), 'request_changes', reviewerB);
		expect(decision).toMatchObject({ allowed: true, next: 'changes_requested', approvals: [] });
	});

	test('available commands match the decisions', () => {
		expect(availableCommands(inReview(), author)).toEqual(['comment', 'withdraw']);
		expect(availableCommands(inReview(), reviewerA)).toEqual(['comment', 'request_changes', 'approve', 'reject']);
		expect(availableCommands(inReview({ state: 'changes_requested' }), author)).toEqual([
			'edit',
			'comment',
			'submit',
			'withdraw'
		]);
		expect(availableCommands(inReview({ state: 'approved' }), author)).toEqual([]);
	});
});
