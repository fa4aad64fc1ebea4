import type { CalibrationWarning, PopulationId, ValidityRange } from './types';
import { CalibrationInputError, POPULATION_IDS } from './types';

export interface PopulationInfo {
	id: PopulationId;
	label: string;
	/** Typical period range of the class, in days (common practice; bounds are indicative). */
	typicalPeriodDays: { min: number; max: number };
	/** Below this period a star of this class is more likely an RR Lyrae star. */
	rrLyraeLimitDays: number;
	/** Above this period a star of this class is more likely a long-period (Mira-type) variable. */
	longPeriodLimitDays: number;
}

/**
 * Classical Cepheids: fundamental mode ~1–100 d, first overtone down to ~0.25 d; Type II classes split
 * at ~4 d (BL Her / W Vir) and ~20 d (W Vir / RV Tau). Common practice; the Type II boundaries are
 * from memory (OGLE Type II Cepheid catalogues).
 */
export const POPULATIONS: Readonly<Record<PopulationId, PopulationInfo>> = {
	classical_fundamental: {
		id: 'classical_fundamental',
		label: 'Classical Cepheid, fundamental mode',
		typicalPeriodDays: { min: 1, max: 100 },
		rrLyraeLimitDays: 1,
		longPeriodLimitDays: 100
	},
	classical_first_overtone: {
		id: 'classical_first_overtone',
		label: 'Classical Cepheid, first overtone',
		typicalPeriodDays: { min: 0.25, max: 7 },
		rrLyraeLimitDays: 0.25,
		longPeriodLimitDays: 100
	},
	type2_bl_her: {
		id: 'type2_bl_her',
		label: 'Type II Cepheid, BL Her',
		typicalPeriodDays: { min: 1, max: 4 },
		rrLyraeLimitDays: 1,
		longPeriodLimitDays: 100
	},
	type2_w_vir: {
		id: 'type2_w_vir',
		label: 'Type II Cepheid, W Vir',
		typicalPeriodDays: { min: 4, max: 20 },
		rrLyraeLimitDays: 1,
		longPeriodLimitDays: 100
	},
	type2_rv_tau: {
		id: 'type2_rv_tau',
		label: 'Type II Cepheid, RV Tau',
		typicalPeriodDays: { min: 20, max: 150 },
		rrLyraeLimitDays: 1,
		// RV Tau formal periods reach ~150 d, so the Mira-type limit sits above the class range.
		longPeriodLimitDays: 150
	}
};

export function isPopulationId(value: unknown): value is PopulationId {
	return typeof value === 'string' && (POPULATION_IDS as readonly string[]).includes(value);
}

export function getPopulation(id: PopulationId): PopulationInfo {
	return POPULATIONS[id];
}

/** Linear model of the period ratio, P1/P0 = c0 + c1·log10 P0. */
export interface PeriodRatioLaw {
	intercept: number;
	logSlope: number;
}

/** P1/P0 = 0.720 − 0.027·log10 P0 (Alcock et al. 1995, as adopted by Feast & Catchpole 1997; from memory). */
export const FIRST_OVERTONE_PERIOD_RATIO: PeriodRatioLaw = { intercept: 0.72, logSlope: -0.027 };

export interface FundamentalisedPeriod {
	periodDays: number;
	periodErrDays: number | null;
	iterations: number;
}

const MAX_FUNDAMENTALISATION_ITERATIONS = 100;
const FUNDAMENTALISATION_TOLERANCE = 1e-14;

/**
 * Fundamental period P0 of a first-overtone pulsator, solving the implicit
 * P1 = P0·(c0 + c1·log10 P0) by fixed-point iteration P0 ← P1 / (c0 + c1·log10 P0)
 * (period-ratio law: Alcock et al. 1995, as adopted by Feast & Catchpole 1997; from memory).
 * The map is a strong contraction (|d/d log P0| = |c1| / (ratio · ln 10) ≈ 0.016), so it converges
 * in a handful of steps; an error is thrown if it does not.
 * The period error is propagated by implicit differentiation: dP1/dP0 = c0 + c1·log10 P0 + c1/ln 10.
 */
export function fundamentalisePeriod(
	firstOvertonePeriodDays: number,
	periodErrDays: number | null = null,
	law: PeriodRatioLaw = FIRST_OVERTONE_PERIOD_RATIO,
	star: string | null = null
): FundamentalisedPeriod {
	if (!Number.isFinite(firstOvertonePeriodDays) || firstOvertonePeriodDays <= 0) {
		throw new CalibrationInputError([
			{ star, field: 'periodDays', message: `period must be a positive number, got ${firstOvertonePeriodDays}` }
		]);
	}
	const ratio = (p0: number) => law.intercept + law.logSlope * Math.log10(p0);
	let p0 = firstOvertonePeriodDays / law.intercept;
	for (let iteration = 1; iteration <= MAX_FUNDAMENTALISATION_ITERATIONS; iteration++) {
		const r = ratio(p0);
		if (!(r > 0)) break;
		const next = firstOvertonePeriodDays / r;
		if (Math.abs(next - p0) <= FUNDAMENTALISATION_TOLERANCE * next) {
			const derivative = ratio(next) + law.logSlope / Math.LN10;
			const periodErr = periodErrDays === null ? null : periodErrDays / derivative;
			return { periodDays: next, periodErrDays: periodErr, iterations: iteration };
		}
		p0 = next;
	}
	throw new CalibrationInputError([
		{
			star,
			field: 'periodDays',
			message: `fundamentalisation of P1 = ${firstOvertonePeriodDays} d did not converge`
		}
	]);
}

/** First-overtone period from a fundamental one: P1 = P0·(c0 + c1·log10 P0). */
export function firstOvertonePeriod(
	fundamentalPeriodDays: number,
	law: PeriodRatioLaw = FIRST_OVERTONE_PERIOD_RATIO
): number {
	return fundamentalPeriodDays * (law.intercept + law.logSlope * Math.log10(fundamentalPeriodDays));
}

/**
 * Warnings about a star's period given its population: RR Lyrae range below the class's limit,
 * Mira-type range above it (common practice).
 */
export function periodWarnings(star: string, population: PopulationId, periodDays: number): CalibrationWarning[] {
	const info = POPULATIONS[population];
	const warnings: CalibrationWarning[] = [];
	if (periodDays < info.rrLyraeLimitDays) {
		warnings.push({
			code: 'period_below_rr_lyrae_limit',
			message: `${star}: P = ${periodDays} d is below ${info.rrLyraeLimitDays} d, the RR Lyrae range for ${info.label}`,
			star,
			field: 'periodDays',
			details: { periodDays, limitDays: info.rrLyraeLimitDays, population }
		});
	}
	if (periodDays > info.longPeriodLimitDays) {
		warnings.push({
			code: 'period_long_period_variable',
			message: `${star}: P = ${periodDays} d is above ${info.longPeriodLimitDays} d, the range of long-period variables`,
			star,
			field: 'periodDays',
			details: { periodDays, limitDays: info.longPeriodLimitDays, population }
		});
	}
	return warnings;
}

/** Warning when a star lies outside a relation's validity range in log P or [Fe/H]. */
export function validityWarnings(
	star: string,
	logPeriod: number,
	feh: number | null,
	validity: ValidityRange
): CalibrationWarning[] {
	const warnings: CalibrationWarning[] = [];
	if (logPeriod < validity.logPeriodMin || logPeriod > validity.logPeriodMax) {
		warnings.push({
			code: 'outside_validity_range',
			message: `${star}: log P = ${logPeriod} is outside ${validity.logPeriodMin}…${validity.logPeriodMax}`,
			star,
			field: 'logPeriod',
			details: { logPeriod, min: validity.logPeriodMin, max: validity.logPeriodMax }
		});
	}
	if (feh !== null) {
		const below = validity.fehMin !== null && feh < validity.fehMin;
		const above = validity.fehMax !== null && feh > validity.fehMax;
		if (below || above) {
			warnings.push({
				code: 'outside_validity_range',
				message: `${star}: [Fe/H] = ${feh} is outside ${validity.fehMin ?? '−∞'}…${validity.fehMax ?? '∞'}`,
				star,
				field: 'feh',
				details: { feh, min: validity.fehMin, max: validity.fehMax }
			});
		}
	}
	return warnings;
}

/** Counts per population; a warning when more than one population enters the same fit. */
export function mixedPopulationWarning(populations: readonly PopulationId[]): CalibrationWarning | null {
	const counts: Partial<Record<PopulationId, number>> = {};
	for (const population of populations) counts[population] = (counts[population] ?? 0) + 1;
	const present = POPULATION_IDS.filter((id) => counts[id] !== undefined);
	if (present.length <= 1) return null;
	return {
		code: 'mixed_populations',
		message: `fit mixes ${present.length} populations: ${present.map((id) => `${id} (${counts[id]})`).join(', ')}`,
		field: 'population',
		details: Object.fromEntries(present.map((id) => [id, counts[id] ?? 0]))
	};
}
