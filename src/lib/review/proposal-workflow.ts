/**
 * The life of a refit proposal, as pure rules. A proposal moves
 * draft → in_review → (changes_requested ↔ in_review) → approved | rejected, and its author may withdraw
 * it until it is decided. Approval needs `requiredApprovals` distinct reviewers, none of them the author,
 * and a base version that is still current; a stale proposal must be rebased, which asks reviewers to
 * look again.
 */

export const PROPOSAL_STATES = [
	'draft',
	'in_review',
	'changes_requested',
	'approved',
	'rejected',
	'withdrawn'
] as const;
export type ProposalState = (typeof PROPOSAL_STATES)[number];

export const PROPOSAL_COMMANDS = [
	'edit',
	'comment',
	'submit',
	'request_changes',
	'approve',
	'reject',
	'withdraw',
	'rebase'
] as const;
export type ProposalCommand = (typeof PROPOSAL_COMMANDS)[number];

export const DECIDED_STATES: ReadonlySet<ProposalState> = new Set(['approved', 'rejected', 'withdrawn']);

export interface Actor {
	id: string;
	/** Whether the actor holds the reviewer role for this relation's group (decided by the caller). */
	canReview: boolean;
}

export interface ProposalSnapshot {
	state: ProposalState;
	authorId: string;
	/** Reviewers who have approved since the proposal last entered review. */
	approvals: readonly string[];
	requiredApprovals: number;
	/** The version this proposal was compared against; null for a relation's first version. */
	baseVersion: number | null;
	/** The relation's current version now; null when none is approved yet. */
	currentVersion: number | null;
}

export type RefusalCode =
	| 'decided'
	| 'wrong_state'
	| 'not_author'
	| 'not_reviewer'
	| 'own_proposal'
	| 'already_approved'
	| 'stale_base'
	| 'not_stale';

export type Decision =
	| {
			allowed: true;
			next: ProposalState;
			approvals: string[];
			/** Set when this command freezes a new version. */
			freezesVersion: number | null;
	  }
	| { allowed: false; code: RefusalCode; reason: string };

const refuse = (code: RefusalCode, reason: string): Decision => ({ allowed: false, code, reason });

export function isStale(proposal: ProposalSnapshot): boolean {
	return proposal.baseVersion !== proposal.currentVersion;
}

/** What happens if `actor` issues `command` on `proposal`; never mutates its input. */
export function decide(proposal: ProposalSnapshot, command: ProposalCommand, actor: Actor): Decision {
	if (DECIDED_STATES.has(proposal.state)) return refuse('decided', `The proposal is already ${proposal.state}.`);
	const isAuthor = actor.id === proposal.authorId;

	switch (command) {
		case 'edit': {
			if (!isAuthor) return refuse('not_author', 'Only the author can edit the proposal.');
			if (proposal.state === 'in_review')
				return refuse('wrong_state', 'Edits are made in draft or after changes were requested.');
			return { allowed: true, next: proposal.state, approvals: [], freezesVersion: null };
		}
		case 'comment':
			// Anyone who may see an open proposal may comment on it; visibility is the caller's check.
			return { allowed: true, next: proposal.state, approvals: [...proposal.approvals], freezesVersion: null };
		case 'submit': {
			if (!isAuthor) return refuse('not_author', 'Only the author can submit the proposal for review.');
			if (proposal.state === 'in_review') return refuse('wrong_state', 'The proposal is already in review.');
			return { allowed: true, next: 'in_review', approvals: [], freezesVersion: null };
		}
		case 'withdraw': {
			if (!isAuthor) return refuse('not_author', 'Only the author can withdraw the proposal.');
			return { allowed: true, next: 'withdrawn', approvals: [...proposal.approvals], freezesVersion: null };
		}
		case 'rebase': {
			if (!isAuthor) return refuse('not_author', 'Only the author can rebase the proposal.');
			if (!isStale(proposal)) return refuse('not_stale', 'The proposal already compares against the current version.');
			// Reviewers approved a comparison with an older version: they must look again.
			const next = proposal.state === 'draft' ? 'draft' : 'in_review';
			return { allowed: true, next, approvals: [], freezesVersion: null };
		}
		case 'request_changes':
		case 'reject':
		case 'approve': {
			if (proposal.state !== 'in_review') return refuse('wrong_state', 'Only a proposal in review can be decided.');
			if (!actor.canReview) return refuse('not_reviewer', 'Only reviewers can decide on proposals.');
			if (isAuthor) return refuse('own_proposal', 'Nobody reviews their own proposal.');
			if (command === 'request_changes') {
				return { allowed: true, next: 'changes_requested', approvals: [], freezesVersion: null };
			}
			if (command === 'reject')
				return { allowed: true, next: 'rejected', approvals: [...proposal.approvals], freezesVersion: null };
			return approve(proposal, actor);
		}
	}
}

function approve(proposal: ProposalSnapshot, actor: Actor): Decision {
	if (proposal.approvals.includes(actor.id))
		return refuse('already_approved', 'You have already approved this proposal.');
	if (isStale(proposal)) {
		return refuse(
			'stale_base',
			`The proposal was compared with version ${proposal.baseVersion ?? 'none'}, but the current version is ${proposal.currentVersion ?? 'none'}; the author must rebase it.`
		);
	}
	const approvals = [...proposal.approvals, actor.id];
	if (approvals.length < proposal.requiredApprovals) {
		return { allowed: true, next: 'in_review', approvals, freezesVersion: null };
	}
	return { allowed: true, next: 'approved', approvals, freezesVersion: (proposal.currentVersion ?? 0) + 1 };
}

/** The commands `actor` may issue now, for rendering only the buttons that will work. */
export function availableCommands(proposal: ProposalSnapshot, actor: Actor): ProposalCommand[] {
	return PROPOSAL_COMMANDS.filter((command) => decide(proposal, command, actor).allowed);
}
