import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { User } from './user.entity';

export const ANALYSIS_KINDS = ['fit', 'light_curves'] as const;
export type AnalysisKind = (typeof ANALYSIS_KINDS)[number];

export const ANALYSIS_STATES = ['queued', 'running', 'succeeded', 'failed'] as const;
export type AnalysisState = (typeof ANALYSIS_STATES)[number];

/**
 * One analysis run (a fit, or a batch of light curves) with its input, progress and result. Small runs finish inside the
 * request; large ones are queued on pg-boss and a worker updates the row as it goes.
 */
export const AnalysisJob = defineEntity({
	name: 'AnalysisJob',
	tableName: 'app_analysis_job',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		kind: p.enum([...ANALYSIS_KINDS]),
		requestedBy: p.manyToOne(User).deleteRule('restrict').index(),
		state: p.enum([...ANALYSIS_STATES]).default('queued'),
		/** 0 to 100. */
		progress: p.integer().default(0),
		/** What the worker is doing now, for people. */
		stage: p.string().length(100).default('queued'),
		/** The request as received (snake_case), plus the resolved calibrator revision id. */
		input: p.json<Record<string, unknown>>(),
		result: p.json<Record<string, unknown>>().nullable(),
		error: p.json<Record<string, unknown>>().nullable(),
		queueJobId: p.string().length(64).nullable(),
		createdAt: p.datetime().onCreate(() => new Date()),
		startedAt: p.datetime().nullable(),
		finishedAt: p.datetime().nullable()
	})
});

export type AnalysisJobEntity = InferEntity<typeof AnalysisJob>;
