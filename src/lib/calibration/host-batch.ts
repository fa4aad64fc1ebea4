/**
 * A host galaxy's Cepheids in one pass over typed arrays: per-star absolute magnitude, μ0 and distance
 * (from `applyRelationColumnar`), per-star warnings, and the σ-clipped inverse-variance mean of
 * `combineHostColumns`, the loop `combineHostDistance` runs too: the same formulas, without an
 * object per star, for batches of 10⁵ stars.
 *
 *   M_i = a + b·(log P_i − p0) + γ·([Fe/H]_i − f0),  σ_M,i = √(gᵢᵀΣgᵢ)
 *   w_i = 1/(σ_phot² + σ_red² + σ_int² + (γσ_[Fe/H])²),  μ_host = Σw_i μ0,i / Σw_i,  σ_stat = 1/√Σw_i
 *   σ_sys = the quadrature sum of the shared terms of host-error-budget.ts, each once
 * Host-wide inputs: a crowding/blending correction is added to every magnitude; stars without [Fe/H]
 * take the host's value (or the relation's pivot), whose error is a shared term, not per-star noise.
 */
import { applyRelationColumnar, type StarColumns } from './apply';
import { getBand } from './bands';
import { bandExtinctionPerEbv } from './extinction';
import { periodWarnings, POPULATIONS } from './populations';
import { combineHostColumns, type HostCombination, type HostDistanceOptions } from './host-distance';
import type { HostBudgetInputs } from './host-error-budget';
import type { RelationSystematicTerm } from './relation-systematics';
import {
	CalibrationInputError,
	type CalibrationWarning,
	type CoefficientAxis,
	type ExtinctionLawId,
	type PopulationId,
	type Relation
} from './types';

export interface HostBatchInput extends StarColumns {
	ids: readonly string[];
	/** Population each star was classified as, when the caller knows it. */
	populations?: readonly (PopulationId | null)[];
}

/** Errors every star of the host shares: systematics of the host, never averaged down with N. */
export interface HostSharedInputs {
	/** 1σ of the foreground E(B−V) applied to every star (mag). */
	foregroundEbvError?: number;
	/**
	 * The host's metallicity (e.g. from an abundance gradient at the Cepheids' radius) for stars without
	 * their own [Fe/H]. `scale: 'o_h'` takes [Fe/H] = [O/H] (solar-scaled abundances), with an optional
	 * conversion error as its own term.
	 */
	metallicity?: { value: number; error: number; scale: 'feh' | 'o_h'; conversionError?: number };
	/** 1σ of an adopted slope (mag/dex). */
	slopeError?: number;
	/** Added to every apparent magnitude (mag; positive when blended light made the stars look too bright). */
	crowding?: { correction: number; error: number };
}

export interface HostBatchOptions extends Omit<HostDistanceOptions, 'budget'> {
	extinctionLaw?: ExtinctionLawId;
	rV?: number;
	/** The relation's frozen systematics. */
	relationTerms?: readonly RelationSystematicTerm[];
	shared?: HostSharedInputs;
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
	const shared = options.shared ?? {};
	const gammaOrNull = relation.coefficients.metallicityTerm;
	const { pivotFeh: f0 } = relation;
	const hostFeh = shared.metallicity?.value ?? null;
	const assumedFeh = new Uint8Array(n);
	let engineInput: StarColumns = input;
	if (gammaOrNull !== null) {
		// Stars without [Fe/H] take the host's value (or the pivot); its error is shared, so not per star.
		const feh = Float64Array.from({ length: n }, (_, i) => (present(input.feh, i) ? input.feh![i] : (hostFeh ?? f0)));
		const fehErr = Float64Array.from({ length: n }, (_, i) =>
			present(input.feh, i) && present(input.fehErr, i) ? input.fehErr![i] : 0
		);
		for (let i = 0; i < n; i++) assumedFeh[i] = present(input.feh, i) ? 0 : 1;
		engineInput = { ...engineInput, feh, fehErr };
	}
	if (shared.crowding) {
		const correction = shared.crowding.correction;
		engineInput = { ...engineInput, mag: input.mag.map((m) => m + correction) };
	}
	const applied = applyRelationColumnar(relation, engineInput, {
		extinctionLaw: options.extinctionLaw,
		rV: options.rV
	});
	const warnings = applied.warnings.filter((warning) => warning.code !== 'outside_validity_range');

	const wesenheit = getBand(relation.bandId).kind === 'wesenheit';
	const law = options.extinctionLaw ?? relation.extinctionLaw;
	const rV = options.rV ?? relation.rV ?? 3.1;
	const budget = sharedBudget(relation, options, wesenheit, law, rV, warnings);
	const anyEbv = input.ebv !== undefined && input.ebv.some((value) => value === value);
	// applyRelationColumnar has already refused a law that cannot deredden this band.
	const ratio = !wesenheit && anyEbv && law !== null ? bandExtinctionPerEbv(law, relation.bandId, rV) : 0;

	const { zeroPoint: a, slope: b } = relation.coefficients;
	const gamma = gammaOrNull ?? 0;
	const { pivotLogPeriod: p0, intrinsicScatter, validity } = relation;
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
		const f = gammaOrNull === null ? (hasFeh ? feh![i] : Number.NaN) : hasFeh ? feh![i] : (hostFeh ?? f0);
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
				message:
					hostFeh === null
						? `no [Fe/H]; the relation's pivot ${f0} was used and its error is in the host's systematics`
						: `no [Fe/H]; the host's ${hostFeh} was used and its error is in the host's systematics`,
				star: id,
				field: 'feh',
				details: { assumed_feh: hostFeh ?? f0, source: hostFeh === null ? 'pivot' : 'host' }
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
		{ ids, mu0: applied.mu0, variance: randomVariance, logPeriod, feh: fehUsed, assumedFeh },
		{ ...options, budget }
	);
	warnings.push(...clipping);
	if (combined.assumedMetallicityCount > 0) {
		const source = hostFeh === null ? `the relation's pivot [Fe/H] = ${f0}` : `the host's [Fe/H] = ${hostFeh}`;
		warnings.push({
			code: 'metallicity_assumed',
			message: `${combined.assumedMetallicityCount} of the ${combined.nUsed} stars used have no [Fe/H] and took ${source}; its error is the host_metallicity term of the error budget`,
			field: 'feh',
			details: {
				count: combined.assumedMetallicityCount,
				assumed_feh: hostFeh ?? f0,
				source: hostFeh === null ? 'pivot' : 'host'
			}
		});
	}
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

/** [Fe/H] range of the relation as a uniform distribution: its σ is the width/√12. */
function pivotAssumptionError(relation: Relation): number | null {
	const { fehMin, fehMax } = relation.validity;
	return fehMin === null || fehMax === null ? null : (fehMax - fehMin) / Math.sqrt(12);
}

/** The host-wide inputs as budget terms, with the warnings their assumptions call for. */
function sharedBudget(
	relation: Relation,
	options: HostBatchOptions,
	wesenheit: boolean,
	law: ExtinctionLawId | null,
	rV: number,
	warnings: CalibrationWarning[]
): HostBudgetInputs {
	const shared = options.shared ?? {};
	const budget: HostBudgetInputs = { relationTerms: options.relationTerms ?? [] };
	if (shared.foregroundEbvError !== undefined) {
		if (!wesenheit && law === null) {
			throw new CalibrationInputError([
				{
					star: null,
					field: 'extinction_law',
					message: `relation in band ${relation.bandId} has no extinction law; pass one to turn the foreground E(B−V) error into magnitudes`
				}
			]);
		}
		const ratio = wesenheit ? 0 : bandExtinctionPerEbv(law as ExtinctionLawId, relation.bandId, rV);
		budget.foregroundReddening = { ebvError: shared.foregroundEbvError, ratio };
	}
	const gamma = relation.coefficients.metallicityTerm;
	const metallicity = shared.metallicity;
	if (metallicity && gamma === null) {
		warnings.push({
			code: 'metallicity_not_used',
			message: 'the relation has no metallicity term, so the host metallicity changes neither μ0 nor its error',
			field: 'host_metallicity'
		});
	}
	if (metallicity?.scale === 'o_h') {
		warnings.push({
			code: 'metallicity_scale_assumed',
			message:
				metallicity.conversionError === undefined
					? 'the host metallicity is [O/H]; it was taken as [Fe/H] = [O/H] (solar-scaled abundances), with no error for that conversion'
					: `the host metallicity is [O/H]; it was taken as [Fe/H] = [O/H] (solar-scaled abundances) ± ${metallicity.conversionError} dex`,
			field: 'host_metallicity',
			details: { conversion: 'feh_equals_o_h', conversion_error: metallicity.conversionError ?? null }
		});
	}
	if (gamma !== null) {
		if (metallicity) {
			budget.metallicity = {
				error: metallicity.error,
				conversionError: metallicity.conversionError ?? 0,
				assumed: 'host'
			};
		} else {
			const error = pivotAssumptionError(relation);
			budget.metallicity = { error: error ?? 0, conversionError: 0, assumed: 'pivot' };
			if (error === null) {
				warnings.push({
					code: 'metallicity_assumption_unbounded',
					message:
						"stars without [Fe/H] took the relation's pivot, and the relation records no [Fe/H] range to bound that assumption; give a host metallicity with its error",
					field: 'host_metallicity'
				});
			}
		}
	}
	if (shared.slopeError !== undefined) budget.slopeError = shared.slopeError;
	if (shared.crowding) budget.crowdingError = shared.crowding.error;
	return budget;
}
