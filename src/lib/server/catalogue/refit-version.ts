import type { EntityManager } from '@mikro-orm/postgresql';
import {
	runRefit,
	sealRelationVersion,
	toCalibratorRows,
	versionContentFromRefit,
	type RefitResult,
	type RelationVersionContent
} from '../../calibration/index';
import { refitSpecFromContent } from '../../catalogue/frozen-spec';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { revisionRows } from '../registry/calibrator-sets';

export type FrozenContent = RelationVersionContent & { digest: string };

/** The calibrator revision a frozen version names, fitted again with the version's own spec. */
export async function refitFrozenVersion(
	em: EntityManager,
	content: FrozenContent,
	options: { withBootstrap: boolean }
): Promise<RefitResult> {
	const set = await em.findOneOrFail(CalibratorSet, { slug: content.calibrator_set.slug });
	const revision = await em.findOneOrFail(CalibratorRevision, {
		calibratorSet: set.id,
		number: content.calibrator_set.revision
	});
	return runRefit(toCalibratorRows(revisionRows(revision)), refitSpecFromContent(content, options));
}

export interface ReproduceOutcome {
	digest_matches: boolean;
	digest: string;
	recomputed_digest: string;
	/** Largest |recomputed − frozen| / |frozen| over the coefficients, covariance and σ_int. */
	max_relative_difference: number;
	differences: { path: string; frozen: number | null; recomputed: number | null }[];
}

function numbersOf(content: RelationVersionContent): Map<string, number | null> {
	const numbers = new Map<string, number | null>([
		['coefficients.zero_point', content.coefficients.zero_point],
		['coefficients.slope', content.coefficients.slope],
		['coefficients.metallicity_term', content.coefficients.metallicity_term],
		['intrinsic_scatter', content.intrinsic_scatter],
		['n_used', content.n_used],
		['validity.log_period_min', content.validity.log_period_min],
		['validity.log_period_max', content.validity.log_period_max]
	]);
	content.covariance.matrix.forEach((row, i) =>
		row.forEach((value, j) => numbers.set(`covariance.matrix[${i}][${j}]`, value))
	);
	return numbers;
}

/**
 * Refits the version from its calibrator revision and spec with the current engine, seals the result
 * with the version's identity (ref, approvers, date) and compares digests and numbers.
 */
export async function reproduceFrozenVersion(em: EntityManager, content: FrozenContent): Promise<ReproduceOutcome> {
	const result = await refitFrozenVersion(em, content, { withBootstrap: true });
	const recomputed = sealRelationVersion(
		versionContentFromRefit(result, {
			slug: content.ref.split('@')[0],
			version: content.version,
			magnitudeSystem: content.magnitude_system,
			calibratorSet: { ...content.calibrator_set },
			approvedBy: content.approved_by.map((person) => ({ ...person })),
			approvedAt: content.approved_at
		})
	);
	const before = numbersOf(content);
	const after = numbersOf(recomputed);
	const differences: ReproduceOutcome['differences'] = [];
	let maxRelative = 0;
	for (const [path, frozen] of before) {
		const again = after.get(path) ?? null;
		if (frozen === again) continue;
		differences.push({ path, frozen, recomputed: again });
		if (frozen === null || again === null) maxRelative = Infinity;
		else maxRelative = Math.max(maxRelative, Math.abs(again - frozen) / Math.max(Math.abs(frozen), Number.MIN_VALUE));
	}
	return {
		digest_matches: recomputed.digest === content.digest,
		digest: content.digest,
		recomputed_digest: recomputed.digest,
		max_relative_difference: maxRelative,
		differences
	};
}
