/**
 * A host galaxy's Cepheids in one pass over typed arrays: per-star absolute magnitude, μ0 and distance
 * (from `applyRelationColumnar`), per-star warnings, and the σ-clipped inverse-variance mean of
 * `combineHostColumns`, the loop `combineHostDistance` runs too: the same formulas, without an
 * object per star, for batches of 10⁵ stars.
 *
 *   M_i = a + b·(log P_i − p0) + γ·([Fe/H]_i − f0),  σ_M,i = √(gᵢᵀΣgᵢ)
 *   w_i = 1/(σ_phot² + σ_red² + σ_int² + (γσ_[Fe/H])²),  μ_host = Σw_i μ0,i / Σw_i,  σ_stat = 1/√Σw_i
 *   σ_sys = √(gᵀΣg at the host's weighted mean log P and [Fe/H])
 */
import { applyRelationColumnar, type StarColumns } from './apply';
import { getBand } from './bands';
import { bandExtinctionPerEbv } from './extinction';
import { periodWarnings, POPULATIONS } from './populations';
import { combineHostColumns, type HostCombination, type HostDistanceOptions } from './host-distance';
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
	/** The σ-clipped combination; its clipping warnings are among `warnings`. */
	combined: Omit<HostCombination, 'rejectedMask' | 'warnings'>;
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

	const {
		rejectedMask,
		warnings: clipping,
		...combined
	} = combineHostColumns(
		relation,
		{ ids, mu0: applied.mu0, variance: randomVariance, logPeriod, feh: fehUsed },
		options
	);
	warnings.push(...clipping);
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
		combined,
		warnings
	};
}
