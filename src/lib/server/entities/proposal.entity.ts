import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { PROPOSAL_STATES } from '../../review/proposal-workflow';
import { AnalysisJob } from './analysis-job.entity';
import { CalibratorRevision } from './calibrator-revision.entity';
import { Relation } from './relation.entity';
import { User } from './user.entity';

/** A refit proposed as a relation's next version, with its rationale and review state. */
export const Proposal = defineEntity({
	name: 'Proposal',
	tableName: 'app_proposal',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		relation: p.manyToOne(Relation).deleteRule('restrict').index(),
		author: p.manyToOne(User).deleteRule('restrict').index(),
		state: p.enum([...PROPOSAL_STATES]).default('draft'),
		title: p.string().length(200),
		/** Markdown, rendered and sanitised on the server when shown. */
		rationale: p.text().default(''),
		/** The relation's current version when the proposal was created or last rebased; null for none. */
		baseVersion: p.integer().nullable(),
		fit: p.manyToOne(AnalysisJob).deleteRule('restrict'),
		calibratorRevision: p.manyToOne(CalibratorRevision).deleteRule('restrict'),
		/** Reviewers (user ids) who approved since the proposal last entered review. */
		approvals: p.array<string>().default('{}'),
		embargoUntil: p.datetime().nullable(),
		/** The version number it became, once approved. */
		versionNumber: p.integer().nullable(),
		createdAt: p.datetime().onCreate(() => new Date()),
		updatedAt: p
			.datetime()
			.onCreate(() => new Date())
			.onUpdate(() => new Date()),
		submittedAt: p.datetime().nullable(),
		decidedAt: p.datetime().nullable()
	})
});

export type ProposalEntity = InferEntity<typeof Proposal>;
