import type { EntityManager } from '@mikro-orm/postgresql';
import type { RelationVersionContent } from '../../calibration/index';
import { COMPARISON_LOG_PERIODS, predictWithError, type ComparableRelation } from '../../review/comparison';
import { decide, type ProposalCommand, type ProposalSnapshot } from '../../review/proposal-workflow';
import { User } from '../entities/index';
import { AnalysisJob } from '../entities/analysis-job.entity';
import { Proposal } from '../entities/proposal.entity';
import { RelationVersion } from '../entities/relation-version.entity';
import { hasRole, type Actor } from '../registry/actor';
import { fitResultOf } from '../registry/fits';
import { getProposal } from '../registry/proposals';
import { proposalToWire } from '../registry/wire';
import { fitCautions } from '../../components/calibrators/fit-cautions';

/** Everything the proposal page shows, as plain data: the wire view plus what only the page needs. */

export interface RelationLine {
	zeroPoint: number;
	slope: number;
	metallicityTerm: number | null;
	pivotLogPeriod: number;
	pivotFeh: number;
	logPeriodMin: number;
	logPeriodMax: number;
}

export interface CalibratorPoint {
	star: string;
	logPeriod: number;
	absMag: number;
	absMagErr: number;
	used: boolean;
}

export interface ActionAvailability {
	allowed: boolean;
	/** Why the viewer cannot do it now; empty when allowed. */
	reason: string;
}

const PAGE_COMMANDS = [
	'approve',
	'request_changes',
	'reject',
	'submit',
	'withdraw',
	'rebase',
	'edit',
	'comment'
] as const;
export type PageCommand = (typeof PAGE_COMMANDS)[number];

/** Periods (days) for the downstream ΔM table from `?periods=3,10,30`; at most eight, 0.1–1000 d. */
export function logPeriodsOf(value: string | null): { logPeriods: number[]; problem: string | null } {
	const fallback = [...COMPARISON_LOG_PERIODS];
	if (!value || !value.trim()) return { logPeriods: fallback, problem: null };
	const parts = value.split(/[\s,;]+/).filter(Boolean);
	const days = parts.map(Number);
	const bad = parts.find((part, i) => !Number.isFinite(days[i]) || days[i] < 0.1 || days[i] > 1000);
	if (bad !== undefined)
		return { logPeriods: fallback, problem: `"${bad}" is not a period between 0.1 and 1000 days.` };
	if (days.length > 8) return { logPeriods: fallback, problem: 'Choose at most eight periods.' };
	return { logPeriods: [...new Set(days)].sort((a, b) => a - b).map((d) => Math.log10(d)), problem: null };
}

function lineOf(content: ComparableRelation): RelationLine {
	return {
		zeroPoint: content.coefficients.zero_point,
		slope: content.coefficients.slope,
		metallicityTerm: content.coefficients.metallicity_term,
		pivotLogPeriod: content.pivot_log_period,
		pivotFeh: content.pivot_feh,
		logPeriodMin: content.validity.log_period_min,
		logPeriodMax: content.validity.log_period_max
	};
}

function pointsOf(
	residuals: { star: string; logPeriod: number; absMag: number | null; absMagErr: number | null; used: boolean }[]
) {
	const points: CalibratorPoint[] = [];
	for (const r of residuals) {
		if (r.absMag === null) continue;
		points.push({ star: r.star, logPeriod: r.logPeriod, absMag: r.absMag, absMagErr: r.absMagErr ?? 0, used: r.used });
	}
	return points;
}

export async function proposalPage(em: EntityManager, actor: Actor, id: string, logPeriods: number[]) {
	const view = await getProposal(em, actor, id);
	const wire = proposalToWire(view);
	const { proposal, relation } = view;

	const approvers = proposal.approvals.length
		? await em.find(User, { id: { $in: [...proposal.approvals] } }, { fields: ['displayName'] })
		: [];

	let base: RelationVersionContent | null = null;
	let basePoints: CalibratorPoint[] = [];
	if (proposal.baseVersion !== null && proposal.baseVersion !== undefined) {
		const version = await em.findOneOrFail(RelationVersion, { relation, number: proposal.baseVersion });
		base = version.content as unknown as RelationVersionContent;
		const baseProposal = version.proposalId ? await em.findOne(Proposal, version.proposalId) : null;
		const baseJob = baseProposal ? await em.findOne(AnalysisJob, baseProposal.fit.id) : null;
		const baseFit = baseJob ? fitResultOf(baseJob) : null;
		if (baseFit) basePoints = pointsOf(baseFit.residuals);
	}

	const feh = view.proposed.pivot_feh;
	const predictions = base
		? logPeriods.map((logPeriod) => {
				const before = predictWithError(base!, logPeriod, feh);
				const after = predictWithError(view.proposed, logPeriod, feh);
				return {
					logPeriod,
					periodDays: 10 ** logPeriod,
					base: before.value,
					baseError: before.error,
					proposed: after.value,
					proposedError: after.error,
					delta: after.value - before.value,
					extrapolated:
						logPeriod < view.proposed.validity.log_period_min ||
						logPeriod > view.proposed.validity.log_period_max ||
						logPeriod < base!.validity.log_period_min ||
						logPeriod > base!.validity.log_period_max
				};
			})
		: [];

	const snapshot: ProposalSnapshot = {
		state: proposal.state,
		authorId: proposal.author.id,
		approvals: [...proposal.approvals],
		requiredApprovals: relation.requiredApprovals,
		baseVersion: proposal.baseVersion ?? null,
		currentVersion: view.currentVersion
	};
	const who = { id: actor.id, canReview: hasRole(actor, 'reviewer') };
	const actions = Object.fromEntries(
		PAGE_COMMANDS.map((command) => {
			const decision = decide(snapshot, command as ProposalCommand, who);
			return [command, { allowed: decision.allowed, reason: decision.allowed ? '' : decision.reason }];
		})
	) as Record<PageCommand, ActionAvailability>;

	let frozen: { ref: string; version: number; digest: string } | null = null;
	if (proposal.versionNumber) {
		const version = await em.findOne(RelationVersion, { relation, number: proposal.versionNumber });
		if (version)
			frozen = { ref: `${relation.slug}@${version.number}`, version: version.number, digest: version.digest };
	}

	return {
		proposal: {
			id: wire.id,
			title: wire.title,
			state: wire.state,
			author: wire.author,
			rationaleHtml: wire.rationale_html,
			baseVersion: wire.base_version,
			currentVersion: wire.current_version,
			stale: wire.stale,
			approvals: approvers.map((user) => user.displayName),
			requiredApprovals: wire.required_approvals,
			embargoUntil: wire.embargo_until,
			submittedAt: wire.submitted_at,
			decidedAt: wire.decided_at,
			updatedAt: wire.updated_at
		},
		relation: {
			slug: relation.slug,
			title: relation.title,
			band: relation.band,
			population: relation.population,
			group: relation.group.slug,
			form: view.proposed.form
		},
		comparison: wire.comparison,
		// The cautions the refit page showed the author, so the reviewer reads the same ones.
		cautions: fitCautions({
			nUsed: view.fit.nUsed,
			nTotal: view.fit.nTotal,
			validity: view.proposed.validity,
			warnings: view.fit.warnings,
			excluded: view.fit.excluded,
			requested: {
				logPeriodMin: view.fit.spec.periodFilter.logPeriodMin,
				logPeriodMax: view.fit.spec.periodFilter.logPeriodMax,
				fundamentalise: view.fit.spec.fundamentalise
			}
		}),
		fitQuality: view.proposed.fit_quality ?? null,
		predictions,
		overlay: {
			base: base ? lineOf(base) : null,
			proposed: lineOf(view.proposed),
			basePoints,
			proposedPoints: pointsOf(view.fit.residuals),
			band: relation.band
		},
		comments: wire.comments.map((comment) => ({
			id: comment.id,
			author: comment.author.display_name,
			decision: comment.decision,
			bodyHtml: comment.body_html,
			createdAt: comment.created_at
		})),
		viewer: { isAuthor: proposal.author.id === actor.id, isReviewer: who.canReview },
		actions,
		frozen
	};
}

export type ProposalPageData = Awaited<ReturnType<typeof proposalPage>>;
