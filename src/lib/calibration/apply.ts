/**
 * Applying a period–luminosity relation to stars: absolute magnitude, extinction, distance modulus and
 * distance, each with its error budget and structured warnings.
 *
 *   M  = a + b·(log10 P − p0) + γ·([Fe/H] − f0)
 *   μ0 = m − A − M,   A = R_λ·E(B−V) with R_λ = A_λ/E(B−V) from the extinction law
 *   σ_μ0² = σ_m² + (R_λ σ_E)² + σ_int² + gᵀΣg + (γ σ_[Fe/H])²,   g = ∂M/∂(coefficients)
 * (standard propagation of independent errors; the coefficient term uses the relation's full covariance).
 */
import { z } from 'zod';
import { getBand } from './bands';
import { bandExtinction } from './extinction';
import { distanceModulusToParsecs } from './units';
import {
	CalibrationInputError,
	type CalibrationWarning,
	type CoefficientAxis,
	type ExtinctionLawId,
	type InputIssue,
	type Measured,
	type Relation
} from './types';

export interface StarPhotometry {
	id: string;
	periodDays: number;
	/** Apparent magnitude in the relation's band and magnitude system. */
	mag: number;
	magErr: number;
	ebv?: number | null;
	ebvErr?: number | null;
	feh?: number | null;
	fehErr?: number | null;
}

/** A_λ (mag) for a law, band, E(B−V) and R_V; throws when the law cannot be used for the band. */
export type ExtinctionFunction = (law: ExtinctionLawId, bandId: string, ebv: number, rV: number) => number;

export type BandKind = 'single' | 'wesenheit';

export interface ApplyOptions {
	/** Extinction law to deredden with; defaults to the relation's own. */
	extinctionLaw?: ExtinctionLawId;
	/** R_V to deredden with; defaults to the relation's own, else 3.1. */
	rV?: number;
	/** Overrides the band catalogue lookup (single band or Wesenheit). */
	bandKind?: BandKind;
	/** Overrides the extinction module. */
	extinction?: ExtinctionFunction;
}

/** Contributions to σ_μ0 (mag), each a 1σ term; they add in quadrature. */
export interface ErrorBudget {
	photometric: number;
	reddening: number;
	intrinsic: number;
	/** Relation coefficients at this star's log P and [Fe/H]; fully correlated between stars. */
	coefficients: number;
	/** γ·σ_[Fe/H] from the star's own metallicity error. */
	metallicity: number;
}

export interface StarDistance {
	id: string;
	logPeriod: number;
	/** [Fe/H] used for M (the relation's pivot when the star has none). */
	feh: number | null;
	/** M with the coefficient error only. */
	absoluteMagnitude: Measured;
	extinction: Measured;
	mu0: Measured;
	distancePc: Measured;
	errorBudget: ErrorBudget;
	warnings: CalibrationWarning[];
}

const DEFAULT_R_V = 3.1;

const finite = z.number().refine(Number.isFinite, 'must be a finite number');
const nonNegative = finite.refine((value) => value >= 0, 'must be ≥ 0');
const optionalFinite = finite.nullable().optional();
const optionalNonNegative = nonNegative.nullable().optional();

const starSchema = z.object({
	id: z.string().min(1, 'must be a non-empty string'),
	periodDays: finite.refine((value) => value > 0, 'must be > 0'),
	mag: finite,
	magErr: nonNegative,
	ebv: optionalFinite,
	ebvErr: optionalNonNegative,
	feh: optionalFinite,
	fehErr: optionalNonNegative
});

/** Validates stars, collecting every problem with the star id (or `#index`) and field. */
export function validateStars(stars: readonly unknown[]): StarPhotometry[] {
	const issues: InputIssue[] = [];
	const valid: StarPhotometry[] = [];
	const seen = new Set<string>();
	stars.forEach((raw, index) => {
		const result = starSchema.safeParse(raw);
		const rawId = (raw as { id?: unknown } | null)?.id;
		const label = typeof rawId === 'string' && rawId.length > 0 ? rawId : `#${index}`;
		if (!result.success) {
			for (const issue of result.error.issues) {
				issues.push({ star: label, field: issue.path.join('.') || 'star', message: issue.message });
			}
			return;
		}
		if (seen.has(result.data.id)) {
			issues.push({ star: label, field: 'id', message: 'duplicate star id' });
		}
		seen.add(result.data.id);
		valid.push(result.data);
	});
	if (issues.length > 0) throw new CalibrationInputError(issues);
	return valid;
}

/** g = ∂M/∂coefficient for each covariance axis; the parallax offset does not enter M. */
function gradientFor(axes: readonly CoefficientAxis[], dLogP: number, dFeh: number): number[] {
	return axes.map((axis) => {
		switch (axis) {
			case 'zero_point':
				return 1;
			case 'slope':
				return dLogP;
			case 'metallicity_term':
				return dFeh;
			default:
				return 0;
		}
	});
}

/** gᵀΣg for the relation's covariance at (log P − p0, [Fe/H] − f0). */
export function coefficientVariance(relation: Relation, dLogP: number, dFeh: number): number {
	const { axes, matrix } = relation.covariance;
	const g = gradientFor(axes, dLogP, dFeh);
	let sum = 0;
	for (let i = 0; i < g.length; i++) {
		if (g[i] === 0) continue;
		for (let j = 0; j < g.length; j++) sum += g[i] * matrix[i][j] * g[j];
	}
	return Math.max(sum, 0);
}

/** M = a + b·(log10 P − p0) + γ·([Fe/H] − f0). */
export function absoluteMagnitude(relation: Relation, logPeriod: number, feh: number | null): number {
	const { zeroPoint, slope, metallicityTerm } = relation.coefficients;
	const dFeh = metallicityTerm === null || feh === null ? 0 : feh - relation.pivotFeh;
	return zeroPoint + slope * (logPeriod - relation.pivotLogPeriod) + (metallicityTerm ?? 0) * dFeh;
}

interface Dereddening {
	kind: BandKind;
	law: ExtinctionLawId | null;
	rV: number;
	/** A_λ/E(B−V), or null when the band is not dereddened. */
	ratio: number | null;
	warnings: CalibrationWarning[];
}

function resolveDereddening(relation: Relation, options: ApplyOptions, needed: boolean): Dereddening {
	const kind = options.bandKind ?? getBand(relation.bandId).kind;
	const warnings: CalibrationWarning[] = [];
	if (kind === 'wesenheit') return { kind, law: null, rV: DEFAULT_R_V, ratio: null, warnings };
	const law = options.extinctionLaw ?? relation.extinctionLaw;
	const rV = options.rV ?? relation.rV ?? DEFAULT_R_V;
	if (options.extinctionLaw && relation.extinctionLaw && options.extinctionLaw !== relation.extinctionLaw) {
		warnings.push({
			code: 'extinction_law_mismatch',
			message: `dereddening with ${options.extinctionLaw} but the relation was calibrated with ${relation.extinctionLaw}`,
			field: 'extinction_law',
			details: { requested: options.extinctionLaw, relation: relation.extinctionLaw }
		});
	}
	if (options.rV !== undefined && relation.rV !== null && options.rV !== relation.rV) {
		warnings.push({
			code: 'r_v_mismatch',
			message: `dereddening with R_V = ${options.rV} but the relation was calibrated with R_V = ${relation.rV}`,
			field: 'r_v',
			details: { requested: options.rV, relation: relation.rV }
		});
	}
	if (!needed) return { kind, law, rV, ratio: null, warnings };
	if (law === null) {
		throw new CalibrationInputError([
			{
				star: null,
				field: 'extinction_law',
				message: `relation in band ${relation.bandId} has no extinction law; pass one to deredden`
			}
		]);
	}
	// A_λ is linear in E(B−V), so one evaluation at E(B−V) = 1 gives the ratio for every star.
	const extinction = options.extinction ?? bandExtinction;
	return { kind, law, rV, ratio: extinction(law, relation.bandId, 1, rV), warnings };
}

/**
 * Applies a relation to stars. Wesenheit relations ignore reddening (and warn if one is given);
 * single-band relations deredden with the relation's extinction law unless told otherwise. A band the
 * law cannot deredden (IRAC, Gaia) throws the extinction module's ExtinctionNotApplicableError when a
 * star carries E(B−V); input problems throw CalibrationInputError naming every star and field.
 */
export function applyRelation(
	relation: Relation,
	stars: readonly StarPhotometry[],
	options: ApplyOptions = {}
): { stars: StarDistance[]; warnings: CalibrationWarning[] } {
	const valid = validateStars(stars);
	const anyReddening = valid.some((star) => star.ebv !== undefined && star.ebv !== null);
	const dered = resolveDereddening(relation, options, anyReddening);
	const { validity, pivotLogPeriod, pivotFeh, intrinsicScatter } = relation;
	const gamma = relation.coefficients.metallicityTerm;

	const results = valid.map((star): StarDistance => {
		const warnings: CalibrationWarning[] = [];
		const logPeriod = Math.log10(star.periodDays);
		const hasEbv = star.ebv !== undefined && star.ebv !== null;

		let feh: number | null = star.feh ?? null;
		if (gamma !== null && feh === null) {
			warnings.push({
				code: 'metallicity_missing',
				message: `no [Fe/H]; the relation's pivot ${pivotFeh} was used`,
				star: star.id,
				field: 'feh',
				details: { pivot_feh: pivotFeh }
			});
			feh = pivotFeh;
		}
		if (logPeriod < validity.logPeriodMin || logPeriod > validity.logPeriodMax) {
			warnings.push({
				code: 'outside_validity_range',
				message: `log P = ${logPeriod.toFixed(4)} is outside the relation's range [${validity.logPeriodMin}, ${validity.logPeriodMax}]`,
				star: star.id,
				field: 'period_days',
				details: {
					log_period: logPeriod,
					log_period_min: validity.logPeriodMin,
					log_period_max: validity.logPeriodMax
				}
			});
		}
		if (
			star.feh !== undefined &&
			star.feh !== null &&
			((validity.fehMin !== null && star.feh < validity.fehMin) ||
				(validity.fehMax !== null && star.feh > validity.fehMax))
		) {
			warnings.push({
				code: 'outside_validity_range',
				message: `[Fe/H] = ${star.feh} is outside the relation's range [${validity.fehMin}, ${validity.fehMax}]`,
				star: star.id,
				field: 'feh',
				details: { feh: star.feh, feh_min: validity.fehMin, feh_max: validity.fehMax }
			});
		}

		let extinction: Measured = { value: 0, error: 0 };
		if (dered.kind === 'wesenheit') {
			if (hasEbv) {
				warnings.push({
					code: 'reddening_ignored',
					message: 'a Wesenheit magnitude is reddening-free; the given E(B−V) was not used',
					star: star.id,
					field: 'ebv',
					details: { ebv: star.ebv ?? null }
				});
			}
		} else if (hasEbv && dered.ratio !== null) {
			extinction = { value: dered.ratio * (star.ebv as number), error: dered.ratio * (star.ebvErr ?? 0) };
		} else {
			warnings.push({
				code: 'reddening_missing',
				message: 'single-band magnitude without E(B−V); no extinction correction was applied',
				star: star.id,
				field: 'ebv'
			});
		}

		const dLogP = logPeriod - pivotLogPeriod;
		const dFeh = gamma === null || feh === null ? 0 : feh - pivotFeh;
		const m = absoluteMagnitude(relation, logPeriod, feh);
		const coefficients = Math.sqrt(coefficientVariance(relation, dLogP, dFeh));
		const metallicity = gamma !== null && star.feh != null ? Math.abs(gamma) * (star.fehErr ?? 0) : 0;
		const budget: ErrorBudget = {
			photometric: star.magErr,
			reddening: extinction.error,
			intrinsic: intrinsicScatter,
			coefficients,
			metallicity
		};
		const mu0Value = star.mag - extinction.value - m;
		const mu0Error = Math.hypot(budget.photometric, budget.reddening, budget.intrinsic, coefficients, metallicity);
		const d = distanceModulusToParsecs(mu0Value);
		return {
			id: star.id,
			logPeriod,
			feh: gamma === null ? (star.feh ?? null) : feh,
			absoluteMagnitude: { value: m, error: coefficients },
			extinction,
			mu0: { value: mu0Value, error: mu0Error },
			distancePc: { value: d, error: (d * Math.LN10 * mu0Error) / 5 },
			errorBudget: budget,
			warnings
		};
	});
	return { stars: results, warnings: dered.warnings };
}

/** Column-oriented input for large batches; every array has one entry per star. */
export interface StarColumns {
	periodDays: Float64Array;
	mag: Float64Array;
	magErr: Float64Array;
	/** NaN entries mean "no reddening given". */
	ebv?: Float64Array;
	ebvErr?: Float64Array;
	/** NaN entries mean "no [Fe/H]" (the relation's pivot is used). */
	feh?: Float64Array;
	fehErr?: Float64Array;
}

export interface DistanceColumns {
	mu0: Float64Array;
	mu0Err: Float64Array;
	distancePc: Float64Array;
	distancePcErr: Float64Array;
	/** 1 where log P or [Fe/H] lies outside the relation's validity range. */
	outsideValidity: Uint8Array;
	outsideValidityCount: number;
	warnings: CalibrationWarning[];
}

/**
 * The same computation as `applyRelation` over typed arrays, without per-star objects, for batches of
 * millions of stars. Inputs are checked for length only; values are trusted.
 */
export function applyRelationColumnar(
	relation: Relation,
	columns: StarColumns,
	options: ApplyOptions = {}
): DistanceColumns {
	const n = columns.periodDays.length;
	for (const [name, column] of Object.entries(columns)) {
		if (column && column.length !== n) {
			throw new CalibrationInputError([
				{ star: null, field: name, message: `has ${column.length} entries, expected ${n}` }
			]);
		}
	}
	const dered = resolveDereddening(relation, options, columns.ebv !== undefined);
	const warnings = [...dered.warnings];
	if (dered.kind === 'wesenheit' && columns.ebv) {
		warnings.push({
			code: 'reddening_ignored',
			message: 'a Wesenheit magnitude is reddening-free; the given E(B−V) column was not used',
			field: 'ebv'
		});
	}
	const ratio = dered.kind === 'single' ? (dered.ratio ?? 0) : 0;
	const ebv = dered.kind === 'single' ? columns.ebv : undefined;
	const ebvErr = dered.kind === 'single' ? columns.ebvErr : undefined;
	const { zeroPoint: a, slope: b } = relation.coefficients;
	const gamma = relation.coefficients.metallicityTerm ?? 0;
	const hasGamma = relation.coefficients.metallicityTerm !== null;
	const feh = hasGamma ? columns.feh : undefined;
	const fehErr = hasGamma ? columns.fehErr : undefined;
	const { pivotLogPeriod: p0, pivotFeh: f0, intrinsicScatter } = relation;
	const { logPeriodMin, logPeriodMax } = relation.validity;
	const fehMin = relation.validity.fehMin ?? -Infinity;
	const fehMax = relation.validity.fehMax ?? Infinity;

	// Σ projected on (1, Δlog P, Δ[Fe/H]): gᵀΣg = c00 + 2c01·x + c11·x² + 2c02·y + 2c12·x·y + c22·y².
	const axes = relation.covariance.axes;
	const cov = (p: CoefficientAxis, q: CoefficientAxis): number => {
		const i = axes.indexOf(p);
		const j = axes.indexOf(q);
		return i < 0 || j < 0 ? 0 : relation.covariance.matrix[i][j];
	};
	const c00 = cov('zero_point', 'zero_point');
	const c01 = 2 * cov('zero_point', 'slope');
	const c11 = cov('slope', 'slope');
	const c02 = 2 * cov('zero_point', 'metallicity_term');
	const c12 = 2 * cov('slope', 'metallicity_term');
	const c22 = cov('metallicity_term', 'metallicity_term');
	const int2 = intrinsicScatter * intrinsicScatter;
	const gamma2 = gamma * gamma;
	const lnTenOverFive = Math.LN10 / 5;
	// Math.exp/Math.log are several times faster than 10 ** x / Math.log10 in V8 and agree to a few ulps.
	const log10e = Math.LOG10E;
	const ln10 = Math.LN10;

	const mu0 = new Float64Array(n);
	const mu0Err = new Float64Array(n);
	const distancePc = new Float64Array(n);
	const distancePcErr = new Float64Array(n);
	const outsideValidity = new Uint8Array(n);
	let outsideValidityCount = 0;
	const { periodDays, mag, magErr } = columns;

	for (let i = 0; i < n; i++) {
		const x = Math.log(periodDays[i]) * log10e - p0;
		let variance = magErr[i] * magErr[i] + int2;
		let mu = mag[i] - a - b * x;
		const logP = x + p0;
		// bitwise rather than short-circuit: no data-dependent branch in the hot loop
		let out = (+(logP < logPeriodMin) | +(logP > logPeriodMax)) as number;
		let cv = c00 + x * (c01 + c11 * x);
		if (feh !== undefined) {
			const f = feh[i];
			if (f === f) {
				const y = f - f0;
				mu -= gamma * y;
				cv += y * (c02 + c12 * x + c22 * y);
				if (fehErr !== undefined) variance += gamma2 * fehErr[i] * fehErr[i];
				out |= +(f < fehMin) | +(f > fehMax);
			}
		}
		if (ebv !== undefined) {
			const e = ebv[i];
			if (e === e) {
				mu -= ratio * e;
				if (ebvErr !== undefined) variance += ratio * ratio * ebvErr[i] * ebvErr[i];
			}
		}
		const sigma = Math.sqrt(variance + Math.max(cv, 0));
		const d = Math.exp(mu * lnTenOverFive + ln10);
		mu0[i] = mu;
		mu0Err[i] = sigma;
		distancePc[i] = d;
		distancePcErr[i] = d * lnTenOverFive * sigma;
		outsideValidity[i] = out;
		outsideValidityCount += out;
	}
	if (outsideValidityCount > 0) {
		warnings.push({
			code: 'outside_validity_range',
			message: `${outsideValidityCount} stars lie outside the relation's validity range`,
			field: 'period_days',
			details: {
				count: outsideValidityCount,
				log_period_min: logPeriodMin,
				log_period_max: logPeriodMax,
				feh_min: relation.validity.fehMin,
				feh_max: relation.validity.fehMax
			}
		});
	}
	return { mu0, mu0Err, distancePc, distancePcErr, outsideValidity, outsideValidityCount, warnings };
}
