import { frozenSystematicTerm, type RefitResult } from '../../calibration/index';
import type { AnalysisJobEntity } from '../entities/analysis-job.entity';
import type { CalibratorRevisionEntity } from '../entities/calibrator-revision.entity';
import type { CalibratorSetEntity } from '../entities/calibrator-set.entity';
import type { RelationEntity } from '../entities/relation.entity';
import type { RelationVersionEntity } from '../entities/relation-version.entity';
import type { VersionLifecycleEntity } from '../entities/version-lifecycle.entity';
import { renderMarkdown } from '../text/markdown';
import type { ProposalEntity } from '../entities/proposal.entity';
import type { ProposalView } from './proposals';
import { isEmbargoed } from './versions';
import type { RevisionDiff } from '../../calibration/index';
import type { RelationComparison } from '../../review/comparison';

/** Registry entities → the API's snake_case JSON, one mapper per resource; fields are whitelisted. */
const iso = (date: Date | null | undefined) => date?.toISOString() ?? null;

export function calibratorSetToWire(set: CalibratorSetEntity) {
	return {
		slug: set.slug,
		title: set.title,
		description: set.description,
		group: set.group.slug ?? null,
		visibility: set.visibility,
		licence: set.licence,
		citations: [...set.citations],
		created_at: iso(set.createdAt)
	};
}

export function revisionToWire(slug: string, revision: Omit<CalibratorRevisionEntity, 'content'>) {
	return {
		calibrator_set: slug,
		revision: revision.number,
		digest: revision.digest,
		source_sha256: revision.sourceSha256,
		source_file: { name: revision.sourceName, media_type: revision.sourceMediaType, bytes: revision.sourceBytes },
		rows: revision.rowCount,
		note: revision.note,
		created_at: iso(revision.createdAt)
	};
}

export function revisionDiffToWire(diff: RevisionDiff) {
	return {
		added: diff.added.map((row) => row.star),
		removed: diff.removed.map((row) => row.star),
		changed: diff.changed.map((change) => ({
			star: change.star,
			previous_name: change.previousName,
			matched_by: change.matchedBy,
			changes: change.changes
		})),
		unchanged_count: diff.unchangedCount,
		fields_added: diff.fieldsAdded,
		fields_removed: diff.fieldsRemoved
	};
}

export function relationToWire(relation: RelationEntity, currentVersion: number | null) {
	return {
		slug: relation.slug,
		title: relation.title,
		description: relation.description,
		band: relation.band,
		population: relation.population,
		magnitude_system: relation.magnitudeSystem,
		anchor_type: relation.anchorType,
		group: relation.group.slug ?? null,
		visibility: relation.visibility,
		required_approvals: relation.requiredApprovals,
		current_version: currentVersion,
		created_at: iso(relation.createdAt)
	};
}

export function fitResultToWire(result: RefitResult) {
	return {
		coefficients: {
			zero_point: result.coefficients.zeroPoint,
			slope: result.coefficients.slope,
			metallicity_term: result.coefficients.metallicityTerm
		},
		errors: {
			zero_point: result.errors.zeroPoint,
			slope: result.errors.slope,
			metallicity_term: result.errors.metallicityTerm,
			parallax_offset: result.errors.parallaxOffset
		},
		parallax_offset_mas: result.parallaxOffsetMas,
		covariance: result.covariance,
		intrinsic_scatter: result.intrinsicScatter,
		intrinsic_scatter_error: result.intrinsicScatterError,
		intrinsic_scatter_source: result.intrinsicScatterSource,
		n_total: result.nTotal,
		n_used: result.nUsed,
		rejected: result.rejected.map((rejection) => ({
			star: rejection.star,
			reason: rejection.reason,
			standardized_residual: rejection.standardizedResidual,
			detail: rejection.detail
		})),
		excluded: result.excluded,
		residuals: result.residuals.map((residual) => ({
			star: residual.star,
			log_period: residual.logPeriod,
			abs_mag: residual.absMag,
			abs_mag_err: residual.absMagErr,
			predicted_mag: residual.predictedMag,
			residual: residual.residual,
			standardized_residual: residual.standardizedResidual,
			used: residual.used
		})),
		validity: {
			log_period_min: result.validity.logPeriodMin,
			log_period_max: result.validity.logPeriodMax,
			feh_min: result.validity.fehMin,
			feh_max: result.validity.fehMax
		},
		chi_square: result.chiSquare,
		degrees_of_freedom: result.degreesOfFreedom,
		reduced_chi_square: result.reducedChiSquare,
		systematics: result.systematics,
		// Absent from results stored before engine 2.
		calibration_systematics: result.calibrationSystematics?.map(frozenSystematicTerm) ?? null,
		fit_quality: result.fitQuality
			? {
					reduced_chi_square: result.fitQuality.reducedChiSquare,
					degrees_of_freedom: result.fitQuality.degreesOfFreedom,
					covariance_scaled: result.fitQuality.covarianceScaled,
					errors_too_small: result.fitQuality.errorsTooSmall
				}
			: null,
		wesenheit_ratio: result.wesenheitRatio ?? null,
		bootstrap: result.bootstrap,
		warnings: result.warnings
	};
}

export function jobToWire(job: AnalysisJobEntity) {
	const result = job.state === 'succeeded' && job.result ? (job.result as unknown as RefitResult) : null;
	return {
		id: job.id,
		kind: job.kind,
		state: job.state,
		progress: job.progress / 100,
		stage: job.stage,
		created_at: iso(job.createdAt),
		started_at: iso(job.startedAt),
		finished_at: iso(job.finishedAt),
		// Other kinds (light curves) store their result already in wire form.
		result: result ? (job.kind === 'fit' ? fitResultToWire(result) : (job.result ?? null)) : null,
		error: job.error ?? null
	};
}

export function proposalSummaryToWire(proposal: ProposalEntity) {
	return {
		id: proposal.id,
		relation: proposal.relation.slug,
		title: proposal.title,
		state: proposal.state,
		author: { id: proposal.author.id, display_name: proposal.author.displayName },
		base_version: proposal.baseVersion ?? null,
		version: proposal.versionNumber ?? null,
		approvals: proposal.approvals.length,
		embargo_until: iso(proposal.embargoUntil),
		created_at: iso(proposal.createdAt),
		updated_at: iso(proposal.updatedAt),
		submitted_at: iso(proposal.submittedAt),
		decided_at: iso(proposal.decidedAt)
	};
}

function withoutIdentity(content: ProposalView['proposed']) {
	const { ref: _ref, version: _version, approved_by: _by, approved_at: _at, ...rest } = content;
	return rest;
}

/** A comparison of two relations (a proposal and its base, or two versions), with the calibrator diff. */
export function comparisonToWire(comparison: RelationComparison, calibrators: RevisionDiff | null) {
	return {
		coefficients: comparison.coefficients.map((c) => ({
			name: c.name,
			base: c.base,
			base_error: c.baseError,
			proposed: c.proposed,
			proposed_error: c.proposedError,
			delta: c.delta,
			delta_over_sigma: c.deltaOverSigma
		})),
		settings: comparison.settings,
		predictions: comparison.predictions.map((p) => ({
			log_period: p.logPeriod,
			base: p.base,
			base_error: p.baseError,
			proposed: p.proposed,
			proposed_error: p.proposedError,
			delta: p.delta
		})),
		rationale: comparison.rationale,
		calibrators: calibrators ? revisionDiffToWire(calibrators) : null
	};
}

export function proposalToWire(view: ProposalView) {
	const { proposal, comparison } = view;
	return {
		...proposalSummaryToWire(proposal),
		rationale: proposal.rationale,
		rationale_html: renderMarkdown(proposal.rationale),
		fit: proposal.fit.id,
		required_approvals: view.relation.requiredApprovals,
		approved_by: [...proposal.approvals],
		current_version: view.currentVersion,
		stale: view.stale,
		available_commands: view.availableCommands,
		// What would be frozen, without the identity an approval gives it (ref, version, approvers, date).
		proposed: withoutIdentity(view.proposed),
		comparison: comparisonToWire(comparison, view.calibrators),
		comments: view.comments.map((comment) => ({
			id: comment.id,
			author: { id: comment.author.id, display_name: comment.author.displayName },
			decision: comment.decision ?? null,
			body: comment.body,
			body_html: renderMarkdown(comment.body),
			created_at: iso(comment.createdAt)
		}))
	};
}

export function versionToWire(slug: string, lifecycle: VersionLifecycleEntity, version?: RelationVersionEntity) {
	return {
		ref: `${slug}@${lifecycle.number}`,
		version: lifecycle.number,
		status: lifecycle.status,
		digest: version?.digest ?? null,
		deprecated_at: iso(lifecycle.deprecatedAt),
		deprecation_reason: lifecycle.deprecationReason ?? null,
		successor: lifecycle.successorNumber ?? null,
		embargo_until: iso(lifecycle.embargoUntil),
		released_at: iso(lifecycle.releasedAt),
		embargoed: isEmbargoed(lifecycle),
		...(version ? { content: version.content } : {})
	};
}
