import type { EntityManager } from '@mikro-orm/postgresql';
import { PROPOSAL_STATES, type ProposalState } from '../../review/proposal-workflow';
import type { ProposalEntity } from '../entities/proposal.entity';
import { hasRole, type Actor } from '../registry/actor';
import { listProposals } from '../registry/proposals';
import { currentVersionNumber } from '../registry/relations';

/** The review queue: what waits for the viewer, the viewer's own proposals, or everything visible. */
export const QUEUE_VIEWS = ['waiting', 'mine', 'all'] as const;
export type QueueView = (typeof QUEUE_VIEWS)[number];

export interface QueueFilter {
	view: QueueView;
	group: string | null;
	state: ProposalState | null;
}

/** Reads the filter from the page's query string; anything unknown falls back to the default. */
export function queueFilterOf(params: URLSearchParams, reviewer: boolean): QueueFilter {
	const view = params.get('view');
	const state = params.get('state');
	const group = params.get('group');
	return {
		view: QUEUE_VIEWS.includes(view as QueueView) ? (view as QueueView) : reviewer ? 'waiting' : 'mine',
		group: group && /^[a-z0-9-]{1,80}$/.test(group) ? group : null,
		state: PROPOSAL_STATES.includes(state as ProposalState) ? (state as ProposalState) : null
	};
}

export interface QueueItem {
	id: string;
	title: string;
	relation: string;
	group: string;
	state: ProposalState;
	author: string;
	mine: boolean;
	approvals: number;
	requiredApprovals: number;
	baseVersion: number | null;
	stale: boolean;
	updatedAt: string;
	submittedAt: string | null;
}

async function toItems(em: EntityManager, actor: Actor, proposals: ProposalEntity[]): Promise<QueueItem[]> {
	const current = new Map<string, number | null>();
	for (const proposal of proposals) {
		const relationId = proposal.relation.id;
		if (!current.has(relationId)) current.set(relationId, await currentVersionNumber(em, relationId));
	}
	return proposals.map((proposal) => {
		const open = proposal.state !== 'approved' && proposal.state !== 'rejected' && proposal.state !== 'withdrawn';
		return {
			id: proposal.id,
			title: proposal.title,
			relation: proposal.relation.slug,
			group: proposal.relation.group.slug,
			state: proposal.state,
			author: proposal.author.displayName,
			mine: proposal.author.id === actor.id,
			approvals: proposal.approvals.length,
			requiredApprovals: proposal.relation.requiredApprovals,
			baseVersion: proposal.baseVersion ?? null,
			stale: open && (proposal.baseVersion ?? null) !== current.get(proposal.relation.id),
			updatedAt: proposal.updatedAt.toISOString(),
			submittedAt: proposal.submittedAt?.toISOString() ?? null
		};
	});
}

export interface ReviewQueue {
	items: QueueItem[];
	/** Groups that own a proposal the viewer may see, for the group filter. */
	groups: string[];
	counts: Record<QueueView, number>;
	isReviewer: boolean;
}

export async function reviewQueue(em: EntityManager, actor: Actor, filter: QueueFilter): Promise<ReviewQueue> {
	const [visible, waiting] = await Promise.all([
		listProposals(em, actor, {}),
		hasRole(actor, 'reviewer') ? listProposals(em.fork(), actor, { awaiting: 'me' }) : Promise.resolve([])
	]);
	const mine = visible.filter((proposal) => proposal.author.id === actor.id);
	const chosen = filter.view === 'waiting' ? waiting : filter.view === 'mine' ? mine : visible;
	const filtered = chosen.filter(
		(proposal) =>
			(!filter.group || proposal.relation.group.slug === filter.group) &&
			(!filter.state || proposal.state === filter.state)
	);
	return {
		items: await toItems(em, actor, filtered),
		groups: [...new Set(visible.map((proposal) => proposal.relation.group.slug))].sort(),
		counts: { waiting: waiting.length, mine: mine.length, all: visible.length },
		isReviewer: hasRole(actor, 'reviewer')
	};
}
