/**
 * A host galaxy's distance modulus from its Cepheids.
 *
 *   w_i = 1 / (σ_phot,i² + σ_red,i² + σ_int² + (γ σ_[Fe/H],i)²),   μ_host = Σ w_i μ0,i / Σ w_i,
 *   σ_stat = 1/√Σw_i,   σ_sys² = Σ_k t_k²,   σ_total² = σ_stat² + σ_sys²
 * (inverse-variance weighted mean). The terms t_k are the errors every star of the host shares, each
 * added once and never averaged down (host-error-budget.ts): the relation's coefficient covariance
 * gᵀΣg at the host's mean log P and [Fe/H], the relation's frozen systematics g·effect, and the
 * host-wide inputs (foreground reddening, host metallicity, adopted slope, crowding).
 */
import type { StarDistance } from './apply';
import { hostErrorBudget, type ErrorBudgetTerm, type HostBudgetInputs } from './host-error-budget';
import { distanceIntervalFromModulus, measuredDistanceFromModulus, type DistanceInterval } from './units';
import { CalibrationInputError, type CalibrationWarning, type InputIssue, type Measured, type Relation } from './types';

export interface HostDistanceOptions {
	/** Reject stars with |standardized residual| above this; null disables clipping. Default 3. */
	clipSigma?: number | null;
	/** Default 10. */
	maxIterations?: number;
	/** Shared errors of the relation and the host, each added once in quadrature. */
	budget?: HostBudgetInputs;
	/** Fewest stars to keep; clipping stops rather than go below it. Default 2. */
	minStars?: number;
}

export interface HostRejectedStar {
	star: string;
	reason: 'sigma_clip';
	/** (μ0,i − μ_host) / σ_i against the final mean. */
	standardizedResidual: number;
}

export interface HostDistance {
	mu0: { value: number; statistical: number; systematic: number; total: number };
	/** d ± σ_d (first order) from μ0 ± σ_total; the value is the median of 10^(μ/5+1) for Gaussian μ. */
	distanceMpc: Measured;
	/** 16th and 84th percentiles of 10^(μ/5+1) for μ0 ± σ_total. */
	distanceIntervalMpc: DistanceInterval;
	nUsed: number;
	used: string[];
	rejected: HostRejectedStar[];
	/** Weighted mean log P of the stars used; the coefficient term is evaluated there. */
	meanLogPeriod: number;
	meanFeh: number | null;
	/** The systematic terms, each once, in mag of μ0; σ_sys is their quadrature sum. */
	errorBudget: ErrorBudgetTerm[];
	/** Used stars whose [Fe/H] was assumed (the host value, or the relation's pivot). */
	assumedMetallicityCount: number;
	/** Σ w_i (μ0,i − μ_host)² / (n − 1), a check of the per-star errors. */
	reducedChiSquare: number | null;
	iterations: number;
	warnings: CalibrationWarning[];
}

/** Per-star variance that is independent between stars (everything but the coefficient term). */
function randomVariance(star: StarDistance): number {
	const { photometric, reddening, intrinsic, metallicity } = star.errorBudget;
	return photometric ** 2 + reddening ** 2 + intrinsic ** 2 + metallicity ** 2;
}

/** One host's stars as columns: what the σ-clipped combination reads of each. */
export interface HostColumns {
	ids: readonly string[];
	mu0: Float64Array;
	/** Per-star random variance σ_i² (everything but the coefficient term), > 0. */
	variance: Float64Array;
	logPeriod: Float64Array;
	/** [Fe/H] each star was taken at; NaN where it has none. */
	feh: Float64Array;
	/** 1 where the star's [Fe/H] was assumed rather than measured; absent: none. */
	assumedFeh?: Uint8Array;
}

export interface HostCombination extends Omit<HostDistance, 'used'> {
	/** 1 for stars σ-clipped from the mean, by position. */
	rejectedMask: Uint8Array;
}

function weightedMean(values: Float64Array, weights: Float64Array, keep: Uint8Array): number {
	let sw = 0;
	let swx = 0;
	for (let i = 0; i < values.length; i++) {
		if (!keep[i]) continue;
		sw += weights[i];
		swx += weights[i] * values[i];
	}
	return swx / sw;
}

/**
 * The σ-clipped inverse-variance combination over columns, the one loop behind `combineHostDistance`
 * and the 10⁵-star batch. Inputs are taken as checked (finite μ0, positive variance, finite systematics).
 */
export function combineHostColumns(
	relation: Relation,
	columns: HostColumns,
	options: HostDistanceOptions = {}
): HostCombination {
	const { ids, mu0: mu, variance, logPeriod, feh, assumedFeh } = columns;
	const n = mu.length;
	const clipSigma = options.clipSigma === undefined ? 3 : options.clipSigma;
	const maxIterations = options.maxIterations ?? 10;
	const minStars = Math.max(1, options.minStars ?? 2);
	const sigma = new Float64Array(n);
	const weight = new Float64Array(n);
	for (let i = 0; i < n; i++) {
		sigma[i] = Math.sqrt(variance[i]);
		weight[i] = 1 / (sigma[i] * sigma[i]);
	}
	let keep = new Uint8Array(n).fill(1);
	let mean = weightedMean(mu, weight, keep);
	let iterations = 0;
	const warnings: CalibrationWarning[] = [];

	if (clipSigma !== null) {
		const next = new Uint8Array(n);
		for (; iterations < maxIterations; iterations++) {
			let kept = 0;
			let changed = false;
			for (let i = 0; i < n; i++) {
				const inside = Math.abs(mu[i] - mean) / sigma[i] <= clipSigma ? 1 : 0;
				next[i] = inside;
				kept += inside;
				if (inside !== keep[i]) changed = true;
			}
			if (kept < minStars) {
				warnings.push({
					code: 'clipping_stopped',
					message: `σ-clipping would leave fewer than ${minStars} stars; stopped`,
					details: { kept, min_stars: minStars }
				});
				break;
			}
			if (!changed) break;
			keep = Uint8Array.from(next);
			mean = weightedMean(mu, weight, keep);
		}
		if (iterations === maxIterations) {
			warnings.push({
				code: 'clipping_not_converged',
				message: `σ-clipping did not settle within ${maxIterations} iterations`,
				details: { max_iterations: maxIterations }
			});
		}
	}

	let sumW = 0;
	let sumWLogP = 0;
	let sumWFeh = 0;
	let sumWFehWeight = 0;
	let chi2 = 0;
	let nUsed = 0;
	let sumWAssumed = 0;
	let assumedMetallicityCount = 0;
	const rejected: HostRejectedStar[] = [];
	const rejectedMask = new Uint8Array(n);
	for (let i = 0; i < n; i++) {
		const residual = (mu[i] - mean) / sigma[i];
		if (!keep[i]) {
			rejected.push({ star: ids[i], reason: 'sigma_clip', standardizedResidual: residual });
			rejectedMask[i] = 1;
			continue;
		}
		nUsed++;
		sumW += weight[i];
		sumWLogP += weight[i] * logPeriod[i];
		if (assumedFeh?.[i]) {
			sumWAssumed += weight[i];
			assumedMetallicityCount++;
		}
		if (feh[i] === feh[i]) {
			sumWFeh += weight[i] * feh[i];
			sumWFehWeight += weight[i];
		}
		chi2 += residual * residual;
	}
	const meanLogPeriod = sumWLogP / sumW;
	const hasGamma = relation.coefficients.metallicityTerm !== null;
	const meanFeh = sumWFehWeight > 0 ? sumWFeh / sumWFehWeight : hasGamma ? relation.pivotFeh : null;
	const errorBudget = hostErrorBudget(relation, options.budget ?? {}, {
		meanLogPeriod,
		meanFeh,
		assumedMetallicityWeight: sumWAssumed / sumW
	});
	const statistical = 1 / Math.sqrt(sumW);
	const systematic = Math.sqrt(errorBudget.reduce((sum, term) => sum + term.value ** 2, 0));
	const total = Math.hypot(statistical, systematic);
	return {
		mu0: { value: mean, statistical, systematic, total },
		distanceMpc: measuredDistanceFromModulus({ value: mean, error: total }, 'Mpc'),
		distanceIntervalMpc: distanceIntervalFromModulus(mean, total, 'Mpc'),
		nUsed,
		rejected,
		rejectedMask,
		meanLogPeriod,
		meanFeh,
		errorBudget,
		assumedMetallicityCount,
		reducedChiSquare: nUsed > 1 ? chi2 / (nUsed - 1) : null,
		iterations,
		warnings
	};
}

/** Combines the Cepheids of one host (results of `applyRelation` with the same relation). */
export function combineHostDistance(
	relation: Relation,
	stars: readonly StarDistance[],
	options: HostDistanceOptions = {}
): HostDistance {
	const issues: InputIssue[] = stars.flatMap((star): InputIssue[] =>
		randomVariance(star) > 0 && Number.isFinite(star.mu0.value)
			? []
			: [{ star: star.id, field: 'mu0', message: 'needs a finite μ0 and a positive random error' }]
	);
	if (stars.length === 0) issues.push({ star: null, field: 'stars', message: 'no stars to combine' });
	for (const term of options.budget?.fixed ?? []) {
		if (!(term.value >= 0) || !Number.isFinite(term.value)) {
			issues.push({ star: null, field: `budget.${term.id}`, message: 'must be finite and ≥ 0' });
		}
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);

	const ids = stars.map((star) => star.id);
	const combined = combineHostColumns(
		relation,
		{
			ids,
			mu0: Float64Array.from(stars, (star) => star.mu0.value),
			variance: Float64Array.from(stars, randomVariance),
			logPeriod: Float64Array.from(stars, (star) => star.logPeriod),
			feh: Float64Array.from(stars, (star) => star.feh ?? Number.NaN),
			assumedFeh: Uint8Array.from(stars, (star) =>
				star.warnings.some((warning) => warning.code === 'metallicity_missing') ? 1 : 0
			)
		},
		options
	);
	return {
		mu0: combined.mu0,
		distanceMpc: combined.distanceMpc,
		distanceIntervalMpc: combined.distanceIntervalMpc,
		nUsed: combined.nUsed,
		used: ids.filter((_, i) => !combined.rejectedMask[i]),
		rejected: combined.rejected,
		meanLogPeriod: combined.meanLogPeriod,
		meanFeh: combined.meanFeh,
		errorBudget: combined.errorBudget,
		assumedMetallicityCount: combined.assumedMetallicityCount,
		reducedChiSquare: combined.reducedChiSquare,
		iterations: combined.iterations,
		warnings: combined.warnings
	};
}
