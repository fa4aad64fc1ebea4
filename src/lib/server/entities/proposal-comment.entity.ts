import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { Proposal } from './proposal.entity';
import { User } from './user.entity';

export const REVIEW_DECISIONS = ['approve', 'request_changes', 'reject'] as const;
export type ReviewDecision = (typeof REVIEW_DECISIONS)[number];

/** A comment on a proposal; a review decision is a comment that carries the decision. */
export const ProposalComment = defineEntity({
	name: 'ProposalComment',
	tableName: 'app_proposal_comment',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		proposal: p.manyToOne(Proposal).deleteRule('cascade').index(),
		author: p.manyToOne(User).deleteRule('restrict'),
		decision: p.enum([...REVIEW_DECISIONS]).nullable(),
		/** Markdown, rendered and sanitised on the server when shown. */
		body: p.text().default(''),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type ProposalCommentEntity = InferEntity<typeof ProposalComment>;
