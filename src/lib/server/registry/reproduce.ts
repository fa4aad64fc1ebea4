import type { EntityManager } from '@mikro-orm/postgresql';
import {
	CalibrationInputError,
	getBand,
	isBandId,
	runRefit,
	sealRelationVersion,
	toCalibratorRows,
	versionContentFromRefit,
	type CanonicalRow,
	type RefitSpec,
	type RelationVersionContent
} from '../../calibration/index';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { AnalysisJob } from '../entities/analysis-job.entity';
import { Proposal } from '../entities/proposal.entity';
import type { Actor } from './actor';
import { revisionRows } from './calibrator-sets';
import { RegistryError } from './errors';
import { DEFAULT_BACKGROUND_THRESHOLDS, type BackgroundThresholds, type FitInput } from './fits';
import { findVersion } from './versions';

/**
 * Reproducing a frozen version: its recorded fit spec run again by the engine on the recorded
 * calibrator revision, the content rebuilt with the version's own identity (ref, approvers, date) in the
 * shape of the engine that froze it, and the digest recomputed by the rule. Everything that differs is
 * listed, leaf by leaf.
 */
export interface Difference {
	/** Dotted path into the content, with [i] for array items. */
	path: string;
	stored: unknown;
	recomputed: unknown;
}

export interface Reproduction {
	/** The recomputed digest equals the version's, and the stored content equals the rebuilt one. */
	digestMatches: boolean;
	digest: string;
	recomputedDigest: string;
	/** The largest |stored − recomputed| / max(|stored|, |recomputed|) over numbers; 0 when all agree. */
	maxRelativeDifference: number;
	differences: Difference[];
}

type Stored = RelationVersionContent & { digest: string };

/**
 * The engine's spec from a frozen `fit` block. A fitted parallax offset is frozen as the total found
 * (prior + fitted), so the prior it started from is taken from the original request when given.
 */
export function specFromFrozen(content: RelationVersionContent, fittedOffsetPrior: number | null = null): RefitSpec {
	const { fit } = content;
	const offset = fit.parallax_offset;
	return {
		bandId: content.band,
		population: fit.population,
		anchor: fit.anchor,
		form: content.form,
		method: fit.method,
		pivotLogPeriod: content.pivot_log_period,
		pivotFeh: content.pivot_feh,
		periodFilter: { logPeriodMin: fit.period_filter.log_period_min, logPeriodMax: fit.period_filter.log_period_max },
		fundamentalise: fit.fundamentalised,
		fixedSlope: fit.fixed_slope,
		fixedZeroPoint: fit.fixed_zero_point,
		clipping: fit.clipping ? { sigma: fit.clipping.sigma, maxIterations: fit.clipping.max_iterations } : null,
		extinctionLaw: fit.extinction_law,
		rV: fit.r_v,
		parallaxOffset: offset
			? {
					mode: offset.mode,
					value: offset.mode === 'fitted' && fittedOffsetPrior !== null ? fittedOffsetPrior : offset.value,
					error: offset.error
				}
			: null,
		bootstrap: fit.bootstrap
			? { resamples: fit.bootstrap.resamples, seed: fit.bootstrap.seed, level: fit.bootstrap.level }
			: null,
		weightedCovariance: fit.weighted_covariance ?? 'absolute',
		assumedIntrinsicScatter: fit.assumed_intrinsic_scatter,
		// Engine 1 knew only the maximum-likelihood estimate.
		intrinsicScatterEstimator: fit.intrinsic_scatter_estimator ?? 'ml',
		fixedSlopeError: content.systematics?.terms.find((term) => term.id === 'fixed_slope')?.error ?? null,
		wesenheitRatio: chosenWesenheitRatio(content)
	};
}

/** A frozen R that differs from the catalogue's, so the rebuilt magnitudes are formed with it. */
function chosenWesenheitRatio(content: RelationVersionContent): RefitSpec['wesenheitRatio'] {
	const ratio = content.wesenheit_ratio ?? null;
	if (ratio === null || !isBandId(content.band)) return null;
	const band = getBand(content.band);
	return band.kind === 'wesenheit' && band.ratio !== ratio
		? { value: ratio, reason: `as frozen in ${content.ref}` }
		: null;
}

/** Leaf-by-leaf differences between two JSON values. */
export function jsonDifferences(stored: unknown, recomputed: unknown, path = ''): Difference[] {
	const isObject = (value: unknown): value is Record<string, unknown> =>
		value !== null && typeof value === 'object' && !Array.isArray(value);
	if (Array.isArray(stored) && Array.isArray(recomputed)) {
		const length = Math.max(stored.length, recomputed.length);
		return Array.from({ length }, (_, i) =>
			jsonDifferences(stored[i] ?? null, recomputed[i] ?? null, `${path}[${i}]`)
		).flat();
	}
	if (isObject(stored) && isObject(recomputed)) {
		const keys = [...new Set([...Object.keys(stored), ...Object.keys(recomputed)])].sort();
		return keys.flatMap((key) =>
			jsonDifferences(stored[key] ?? null, recomputed[key] ?? null, path ? `${path}.${key}` : key)
		);
	}
	return Object.is(stored, recomputed) ? [] : [{ path: path || '(root)', stored, recomputed }];
}

function relativeDifference({ stored, recomputed }: Difference): number {
	if (typeof stored !== 'number' || typeof recomputed !== 'number') return 0;
	const scale = Math.max(Math.abs(stored), Math.abs(recomputed));
	return scale === 0 ? 0 : Math.abs(stored - recomputed) / scale;
}

/** Reruns the frozen spec on the rows and compares the rebuilt content with the stored one. Pure. */
export function reproduceContent(
	stored: Stored,
	rows: readonly CanonicalRow[],
	fittedOffsetPrior: number | null = null
): Reproduction {
	const result = runRefit(toCalibratorRows(rows), specFromFrozen(stored, fittedOffsetPrior));
	const [slug] = stored.ref.split('@');
	const rebuilt = sealRelationVersion(
		versionContentFromRefit(
			result,
			{
				slug,
				version: stored.version,
				magnitudeSystem: stored.magnitude_system,
				calibratorSet: { ...stored.calibrator_set },
				approvedBy: stored.approved_by.map((approver) => ({ ...approver })),
				approvedAt: stored.approved_at
			},
			// The content shape of the engine that froze it: a 1.x version is rebuilt without the keys 2.0 added.
			stored.engine_version
		)
	);
	const { digest: _stored, ...storedContent } = stored;
	const { digest: recomputedDigest, ...rebuiltContent } = rebuilt;
	const differences = jsonDifferences(storedContent, rebuiltContent);
	return {
		// A stored row whose content no longer hashes to its digest differs from the rebuilt content.
		digestMatches: recomputedDigest === stored.digest && differences.length === 0,
		digest: stored.digest,
		recomputedDigest,
		maxRelativeDifference: differences.reduce((max, difference) => Math.max(max, relativeDifference(difference)), 0),
		differences
	};
}

/** The read API's (and the version page's) snake_case form of a reproduction. */
export function reproductionToWire(reproduction: Reproduction) {
	return {
		digest_matches: reproduction.digestMatches,
		digest: reproduction.digest,
		recomputed_digest: reproduction.recomputedDigest,
		max_relative_difference: reproduction.maxRelativeDifference,
		differences: reproduction.differences
	};
}

/**
 * How much recomputation a caller who is not signed in may ask of the request: what a fit would run in
 * the request rather than queue (fewer than 200 bootstrap resamples and fewer than 5000 calibrators).
 * A larger reproduction needs a session or an API token, so its cost lands on an account that the
 * per-account limits see.
 */
export const ANONYMOUS_REPRODUCTION_BOUND: BackgroundThresholds = DEFAULT_BACKGROUND_THRESHOLDS;

export function withinAnonymousBound(
	stored: Pick<RelationVersionContent, 'fit'>,
	rowCount: number,
	bound: BackgroundThresholds = ANONYMOUS_REPRODUCTION_BOUND
): boolean {
	return (stored.fit.bootstrap?.resamples ?? 0) < bound.bootstrapResamples && rowCount < bound.stars;
}

/**
 * The version's reproduction, or 404 when the caller may not see it. A caller who is not signed in is
 * refused (401) a reproduction beyond ANONYMOUS_REPRODUCTION_BOUND before the engine runs.
 */
export async function reproduceVersion(
	em: EntityManager,
	actor: Actor | null,
	slug: string,
	number: number,
	caller: { signedIn: boolean } = { signedIn: false }
): Promise<Reproduction> {
	const { version } = await findVersion(em, actor, slug, number);
	const stored = version.content as unknown as Stored;
	const revision = await em.findOne(CalibratorRevision, {
		calibratorSet: { slug: stored.calibrator_set.slug },
		number: stored.calibrator_set.revision
	});
	if (!revision)
		throw new RegistryError(
			409,
			'calibrators-missing',
			`${stored.calibrator_set.slug} has no revision ${stored.calibrator_set.revision}.`
		);
	const rows = revisionRows(revision);
	if (!caller.signedIn && !withinAnonymousBound(stored, rows.length))
		throw new RegistryError(
			401,
			'sign-in-to-reproduce',
			`Reproducing ${stored.ref} reruns ${stored.fit.bootstrap?.resamples ?? 0} bootstrap resamples over ${rows.length} calibrators; ` +
				`without signing in (or an API token) a reproduction is limited to fewer than ${ANONYMOUS_REPRODUCTION_BOUND.bootstrapResamples} resamples and ${ANONYMOUS_REPRODUCTION_BOUND.stars} calibrators.`
		);
	try {
		return reproduceContent(stored, rows, await fittedOffsetPrior(em, version.proposalId, stored));
	} catch (error) {
		if (!(error instanceof CalibrationInputError)) throw error;
		throw new RegistryError(
			422,
			'not-reproducible',
			'The engine refused the frozen spec on the frozen calibrators.',
			error.issues.map((issue) => ({ path: issue.field, message: issue.message }))
		);
	}
}

async function fittedOffsetPrior(em: EntityManager, proposalId: string | null | undefined, stored: Stored) {
	if (stored.fit.parallax_offset?.mode !== 'fitted' || !proposalId) return null;
	const proposal = await em.findOne(Proposal, proposalId, { fields: ['fit'] });
	const job = proposal ? await em.findOne(AnalysisJob, proposal.fit.id, { fields: ['input'] }) : null;
	return (job?.input as FitInput | undefined)?.request.parallax_offset?.value ?? null;
}
