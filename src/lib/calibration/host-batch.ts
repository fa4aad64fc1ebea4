/**
 * A host galaxy's Cepheids in one pass over typed arrays: per-star absolute magnitude, μ0 and distance
 * (from `applyRelationColumnar`), per-star warnings, and the σ-clipped inverse-variance mean of
 * `combineHostDistance` — the same formulas, without an object per star, for batches of 10⁵ stars.
 *
 *   M_i = a + b·(log P_i − p0) + γ·([Fe/H]_i − f0),  σ_M,i = √(gᵢᵀΣgᵢ)
 *   w_i = 1/(σ_phot² + σ_red² + σ_int² + (γσ_[Fe/H])²),  μ_host = Σw_i μ0,i / Σw_i,  σ_stat = 1/√Σw_i
 *   σ_sys = √(gᵀΣg at the host's weighted mean log P and [Fe/H])
 */
import { applyRelationColumnar, coefficientVariance, type StarColumns } from './apply';
import { getBand } from './bands';
import { bandExtinctionPerEbv } from './extinction';
import { periodWarnings, POPULATIONS } from './populations';
import type { HostDistanceOptions, HostRejectedStar, SystematicTerm } from './host-distance';
import { measuredDistanceFromModulus } from './units';
import type { CalibrationWarning, CoefficientAxis, ExtinctionLawId, PopulationId, Relation } from './types';

export interface HostBatchInput extends StarColumns {
	ids: readonly string[];
	/** Population each star was classified as, when the caller knows it. */
	populations?: readonly (PopulationId | null)[];
}

export interface HostBatchOptions extends HostDistanceOptions {
	extinctionLaw?: ExtinctionLawId;
	rV?: number;
}

export interface HostBatchResult {
	logPeriod: Float64Array;
	absMag: Float64Array;
	absMagErr: Float64Array;
	mu0: Float64Array;
	mu0Err: Float64Array;
	distanceMpc: Float64Array;
	distanceMpcErr: Float64Array;
	/** 1 for stars σ-clipped from the host mean. */
	rejectedMask: Uint8Array;
	/** Per-star warnings; stars without any share one frozen empty array. */
	starWarnings: readonly (readonly CalibrationWarning[])[];
	combined: {
		mu0: { value: number; statistical: number; systematic: number; total: number };
		distanceMpc: { value: number; error: number };
		nUsed: number;
		rejected: HostRejectedStar[];
		meanLogPeriod: number;
		meanFeh: number | null;
		systematicTerms: SystematicTerm[];
		reducedChiSquare: number | null;
		iterations: number;
	};
	/** Warnings about the whole request (law mismatch, mixed populations, clipping). */
	warnings: CalibrationWarning[];
}

const NONE: readonly CalibrationWarning[] = Object.freeze([]);
const PC_PER_MPC = 1e6;

function covarianceOf(relation: Relation, p: CoefficientAxis, q: CoefficientAxis): number {
	const i = relation.covariance.axes.indexOf(p);
	const j = relation.covariance.axes.indexOf(q);
	return i < 0 || j < 0 ? 0 : relation.covariance.matrix[i][j];
}

const present = (column: Float64Array | undefined, i: number) => column !== undefined && column[i] === column[i];

/** Applies a relation to a host's stars and combines them; throws what the engine throws for bad input. */
export function hostDistanceBatch(
	relation: Relation,
	input: HostBatchInput,
	options: HostBatchOptions = {}
): HostBatchResult {
	const n = input.periodDays.length;
	const applied = applyRelationColumnar(relation, input, { extinctionLaw: options.extinctionLaw, rV: options.rV });
	const warnings = applied.warnings.filter((warning) => warning.code !== 'outside_validity_range');

	const wesenheit = getBand(relation.bandId).kind === 'wesenheit';
	const law = options.extinctionLaw ?? relation.extinctionLaw;
	const rV = options.rV ?? relation.rV ?? 3.1;
	const anyEbv = input.ebv !== undefined && input.ebv.some((value) => value === value);
	// applyRelationColumnar has already refused a law that cannot deredden this band.
	const ratio = !wesenheit && anyEbv && law !== null ? bandExtinctionPerEbv(law, relation.bandId, rV) : 0;

	const { zeroPoint: a, slope: b } = relation.coefficients;
	const gammaOrNull = relation.coefficients.metallicityTerm;
	const gamma = gammaOrNull ?? 0;
	const { pivotLogPeriod: p0, pivotFeh: f0, intrinsicScatter, validity } = relation;
	const c00 = covarianceOf(relation, 'zero_point', 'zero_point');
	const c01 = 2 * covarianceOf(relation, 'zero_point', 'slope');
	const c11 = covarianceOf(relation, 'slope', 'slope');
	const c02 = 2 * covarianceOf(relation, 'zero_point', 'metallicity_term');
	const c12 = 2 * covarianceOf(relation, 'slope', 'metallicity_term');
	const c22 = covarianceOf(relation, 'metallicity_term', 'metallicity_term');
	const int2 = intrinsicScatter * intrinsicScatter;

	const absMag = new Float64Array(n);
	const absMagErr = new Float64Array(n);
	const logPeriod = new Float64Array(n);
	const fehUsed = new Float64Array(n);
	const randomVariance = new Float64Array(n);
	const distanceMpc = new Float64Array(n);
	const distanceMpcErr = new Float64Array(n);
	const starWarnings: (readonly CalibrationWarning[])[] = new Array(n);
	const { ids, periodDays, magErr, ebv, ebvErr, feh, fehErr, populations } = input;
	const populationCounts = new Map<PopulationId, number>();
	const population = POPULATIONS[relation.population];

	for (let i = 0; i < n; i++) {
		const logP = Math.log10(periodDays[i]);
		const x = logP - p0;
		const hasFeh = present(feh, i);
		const f = gammaOrNull === null ? (hasFeh ? feh![i] : Number.NaN) : hasFeh ? feh![i] : f0;
		const y = gammaOrNull === null ? 0 : f - f0;
		absMag[i] = a + b * x + gamma * y;
		absMagErr[i] = Math.sqrt(Math.max(c00 + x * (c01 + c11 * x) + y * (c02 + c12 * x + c22 * y), 0));
		logPeriod[i] = logP;
		fehUsed[i] = f;
		const hasEbv = present(ebv, i);
		const reddening = !wesenheit && hasEbv && ebvErr !== undefined && ebvErr[i] === ebvErr[i] ? ratio * ebvErr[i] : 0;
		const metallicity =
			gammaOrNull !== null && hasFeh && fehErr !== undefined && fehErr[i] === fehErr[i] ? gamma * fehErr[i] : 0;
		randomVariance[i] = magErr[i] * magErr[i] + reddening * reddening + int2 + metallicity * metallicity;
		distanceMpc[i] = applied.distancePc[i] / PC_PER_MPC;
		distanceMpcErr[i] = applied.distancePcErr[i] / PC_PER_MPC;

		let list: CalibrationWarning[] | null = null;
		const id = ids[i];
		if (gammaOrNull !== null && !hasFeh) {
			(list ??= []).push({
				code: 'metallicity_missing',
				message: `no [Fe/H]; the relation's pivot ${f0} was used`,
				star: id,
				field: 'feh',
				details: { pivot_feh: f0 }
			});
		}
		if (logP < validity.logPeriodMin || logP > validity.logPeriodMax) {
			(list ??= []).push({
				code: 'outside_validity_range',
				message: `log P = ${logP.toFixed(4)} is outside the relation's range [${validity.logPeriodMin}, ${validity.logPeriodMax}]: the relation is extrapolated`,
				star: id,
				field: 'period_days',
				details: { log_period: logP, log_period_min: validity.logPeriodMin, log_period_max: validity.logPeriodMax }
			});
		}
		if (
			hasFeh &&
			((validity.fehMin !== null && feh![i] < validity.fehMin) ||
				(validity.fehMax !== null && feh![i] > validity.fehMax))
		) {
			(list ??= []).push({
				code: 'outside_validity_range',
				message: `[Fe/H] = ${feh![i]} is outside the relation's range [${validity.fehMin}, ${validity.fehMax}]`,
				star: id,
				field: 'feh',
				details: { feh: feh![i], feh_min: validity.fehMin, feh_max: validity.fehMax }
			});
		}
		if (wesenheit && hasEbv) {
			(list ??= []).push({
				code: 'reddening_ignored',
				message: 'a Wesenheit magnitude is reddening-free; the given E(B−V) was not used',
				star: id,
				field: 'ebv',
				details: { ebv: ebv![i] }
			});
		} else if (!wesenheit && !hasEbv) {
			(list ??= []).push({
				code: 'reddening_missing',
				message: 'single-band magnitude without E(B−V); no extinction correction was applied',
				star: id,
				field: 'ebv'
			});
		}
		const starPopulation = populations?.[i] ?? null;
		if (starPopulation !== null) {
			populationCounts.set(starPopulation, (populationCounts.get(starPopulation) ?? 0) + 1);
			if (starPopulation !== relation.population) {
				(list ??= []).push({
					code: 'population_mismatch',
					message: `the star is classified ${starPopulation} but the relation is for ${relation.population}`,
					star: id,
					field: 'population',
					details: { star_population: starPopulation, relation_population: relation.population }
				});
			}
		}
		if (periodDays[i] < population.rrLyraeLimitDays || periodDays[i] > population.longPeriodLimitDays) {
			// A period outside the class's range suggests another kind of variable star.
			for (const warning of periodWarnings(id, relation.population, periodDays[i])) {
				(list ??= []).push({
					code: warning.code,
					message: warning.message,
					star: id,
					field: 'period_days',
					details: {
						period_days: periodDays[i],
						limit_days: warning.details?.limitDays ?? null,
						population: relation.population
					}
				});
			}
		}
		starWarnings[i] = list ?? NONE;
	}
	if (populationCounts.size > 1 || (populationCounts.size === 1 && !populationCounts.has(relation.population))) {
		warnings.push({
			code: 'mixed_populations',
			message: `the stars are not all of the relation's population (${relation.population}): ${[...populationCounts]
				.map(([id, count]) => `${id} (${count})`)
				.join(', ')}`,
			field: 'population',
			details: Object.fromEntries(populationCounts)
		});
	}

	const combined = combine(relation, ids, applied.mu0, randomVariance, logPeriod, fehUsed, options, warnings);
	const rejectedMask = new Uint8Array(n);
	for (const star of combined.rejectedIndexes) rejectedMask[star] = 1;
	return {
		logPeriod,
		absMag,
		absMagErr,
		mu0: applied.mu0,
		mu0Err: applied.mu0Err,
		distanceMpc,
		distanceMpcErr,
		rejectedMask,
		starWarnings,
		combined: combined.result,
		warnings
	};
}

/** combineHostDistance over columns (same clipping loop, same sums). */
function combine(
	relation: Relation,
	ids: readonly string[],
	mu: Float64Array,
	variance: Float64Array,
	logPeriod: Float64Array,
	feh: Float64Array,
	options: HostDistanceOptions,
	warnings: CalibrationWarning[]
) {
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
	const meanOf = (keep: Uint8Array) => {
		let sw = 0;
		let swx = 0;
		for (let i = 0; i < n; i++) {
			if (!keep[i]) continue;
			sw += weight[i];
			swx += weight[i] * mu[i];
		}
		return swx / sw;
	};
	let keep = new Uint8Array(n).fill(1);
	let mean = meanOf(keep);
	let iterations = 0;
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
			mean = meanOf(keep);
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
	const rejected: HostRejectedStar[] = [];
	const rejectedIndexes: number[] = [];
	for (let i = 0; i < n; i++) {
		const residual = (mu[i] - mean) / sigma[i];
		if (!keep[i]) {
			rejected.push({ star: ids[i], reason: 'sigma_clip', standardizedResidual: residual });
			rejectedIndexes.push(i);
			continue;
		}
		nUsed++;
		sumW += weight[i];
		sumWLogP += weight[i] * logPeriod[i];
		if (feh[i] === feh[i]) {
			sumWFeh += weight[i] * feh[i];
			sumWFehWeight += weight[i];
		}
		chi2 += residual * residual;
	}
	const meanLogPeriod = sumWLogP / sumW;
	const hasGamma = relation.coefficients.metallicityTerm !== null;
	const meanFeh = sumWFehWeight > 0 ? sumWFeh / sumWFehWeight : hasGamma ? relation.pivotFeh : null;
	const coefficientTerm = Math.sqrt(
		coefficientVariance(
			relation,
			meanLogPeriod - relation.pivotLogPeriod,
			hasGamma && meanFeh !== null ? meanFeh - relation.pivotFeh : 0
		)
	);
	const systematicTerms: SystematicTerm[] = [
		{ name: 'relation_coefficients', error: coefficientTerm },
		...(options.systematics ?? [])
	];
	const statistical = 1 / Math.sqrt(sumW);
	const systematic = Math.sqrt(systematicTerms.reduce((sum, term) => sum + term.error ** 2, 0));
	const total = Math.hypot(statistical, systematic);
	return {
		rejectedIndexes,
		result: {
			mu0: { value: mean, statistical, systematic, total },
			distanceMpc: measuredDistanceFromModulus({ value: mean, error: total }, 'Mpc'),
			nUsed,
			rejected,
			meanLogPeriod,
			meanFeh,
			systematicTerms,
			reducedChiSquare: nUsed > 1 ? chi2 / (nUsed - 1) : null,
			iterations
		}
	};
}
