/**
 * Shared shapes of the calibration core. Plain data only: every value here can be written as JSON,
 * so the server, the API, workers and the browser pass them around unchanged.
 */

/** Stable population ids used by the API. */
export const POPULATION_IDS = [
	'classical_fundamental',
	'classical_first_overtone',
	'type2_bl_her',
	'type2_w_vir',
	'type2_rv_tau'
] as const;
export type PopulationId = (typeof POPULATION_IDS)[number];

export type MagnitudeSystem = 'Vega' | 'AB';

/** Extinction law ids (see extinction.ts). */
export const EXTINCTION_LAW_IDS = ['ccm89', 'odonnell94', 'fitzpatrick99'] as const;
export type ExtinctionLawId = (typeof EXTINCTION_LAW_IDS)[number];

/** Names of the coefficient axes, in the order they appear in a covariance matrix. */
export type CoefficientAxis = 'zero_point' | 'slope' | 'metallicity_term' | 'parallax_offset';

export interface Covariance {
	axes: CoefficientAxis[];
	/** Symmetric, axes.length × axes.length, in the units of the coefficients (mag², mag²/dex, …). */
	matrix: number[][];
}

export interface Coefficients {
	/** a: absolute magnitude at log P = p0 and [Fe/H] = f0 (mag). */
	zeroPoint: number;
	/** b: mag per dex in log P. */
	slope: number;
	/** γ: mag per dex in [Fe/H], or null when the relation has no metallicity term. */
	metallicityTerm: number | null;
}

export interface ValidityRange {
	logPeriodMin: number;
	logPeriodMax: number;
	fehMin: number | null;
	fehMax: number | null;
}

/**
 * A period–luminosity relation M = a + b(log10 P − p0) + γ([Fe/H] − f0), as the apply functions need it.
 */
export interface Relation {
	bandId: string;
	population: PopulationId;
	magnitudeSystem: MagnitudeSystem;
	coefficients: Coefficients;
	pivotLogPeriod: number;
	pivotFeh: number;
	covariance: Covariance;
	/** σ_int (mag). */
	intrinsicScatter: number;
	validity: ValidityRange;
	/** Law used to deredden single-band calibrators; null for Wesenheit relations. */
	extinctionLaw: ExtinctionLawId | null;
	rV: number | null;
}

/** A value with its 1σ uncertainty. */
export interface Measured {
	value: number;
	error: number;
}

/** A structured warning. `code` is stable (the API exposes it); `message` is for people. */
export interface CalibrationWarning {
	code: string;
	message: string;
	/** Which star or field it concerns, when it concerns one. */
	star?: string;
	field?: string;
	/** Numbers behind the warning, for a client to render its own text. */
	details?: Record<string, number | string | null>;
}

/** One problem with an input, naming the star (or row) and the field. */
export interface InputIssue {
	star: string | null;
	field: string;
	message: string;
}

/** Thrown for input the core refuses; carries every problem found, not only the first. */
export class CalibrationInputError extends Error {
	readonly issues: InputIssue[];
	constructor(issues: InputIssue[]) {
		super(
			issues
				.slice(0, 5)
				.map((issue) => `${issue.star ?? 'input'}: ${issue.field}: ${issue.message}`)
				.join('; ') + (issues.length > 5 ? ` (and ${issues.length - 5} more)` : '')
		);
		this.name = 'CalibrationInputError';
		this.issues = issues;
	}
}
