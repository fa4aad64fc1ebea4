/**
 * Structured warnings about a light-curve analysis. Codes are stable API strings; thresholds are
 * constants here so a reader can see what triggered a warning.
 */
import { periodWarnings } from '../populations';
import type { CalibrationWarning, PopulationId } from '../types';
import { ALIAS_AMBIGUITY_RATIO, nearSamplingFrequency, type AliasCheck } from './aliases';
import type { FourierShape } from './fourier-model';
import type { PhaseCoverage } from './phase-coverage';

/**
 * Peak-to-peak amplitudes (mag) usual for each class from V to I (from memory: classical Cepheids ~0.1–1.5
 * mag in V, less in I; first overtones rarely above ~0.6; Type II up to ~1.5, RV Tau up to ~2).
 */
export const USUAL_AMPLITUDE_RANGE: Readonly<Record<PopulationId, { min: number; max: number }>> = {
	classical_fundamental: { min: 0.05, max: 2 },
	classical_first_overtone: { min: 0.02, max: 0.8 },
	type2_bl_her: { min: 0.05, max: 2 },
	type2_w_vir: { min: 0.05, max: 2 },
	type2_rv_tau: { min: 0.05, max: 3 }
};

/**
 * First-overtone light curves are close to sinusoids (R21 ≲ 0.2 in I), fundamental-mode ones are skewed
 * (R21 ≳ 0.3) except near the Hertzsprung-progression minimum at 8–12 d (from memory; Simon & Lee 1981).
 */
export const FIRST_OVERTONE_MAX_R21 = 0.3;
export const FUNDAMENTAL_MIN_R21 = 0.1;
export const HERTZSPRUNG_PROGRESSION_DAYS = { min: 8, max: 12 };

export const SIGNIFICANCE_LIMIT_FAP = 1e-3;
/** χ²/ν above which the Fourier model does not describe the curve (eclipses, blends, mode beating). */
export const POOR_MODEL_REDUCED_CHI_SQUARE = 25;
export const LARGEST_PHASE_GAP = 0.2;
export const MIN_CYCLES = 2;

export interface WarningInput {
	id: string;
	population: PopulationId;
	periodDays: number;
	frequency: number;
	gridStep: number;
	baselineDays: number;
	falseAlarmProbability: number;
	peakToPeakAmplitude: number;
	shape: FourierShape;
	coverage: PhaseCoverage;
	aliases: AliasCheck[];
	reducedChiSquare: number;
	residualRms: number;
}

export function lightCurveWarnings(input: WarningInput): CalibrationWarning[] {
	const { id: star, population, periodDays } = input;
	const warnings = periodWarnings(star, population, periodDays);
	const warn = (code: string, message: string, field: string, details: CalibrationWarning['details']) =>
		warnings.push({ code, message: `${star}: ${message}`, star, field, details });

	if (input.falseAlarmProbability > SIGNIFICANCE_LIMIT_FAP) {
		warn(
			'period_not_significant',
			`false-alarm probability ${input.falseAlarmProbability.toPrecision(2)} exceeds ${SIGNIFICANCE_LIMIT_FAP}`,
			'false_alarm_probability',
			{
				falseAlarmProbability: input.falseAlarmProbability,
				limit: SIGNIFICANCE_LIMIT_FAP
			}
		);
	}
	const sampling = nearSamplingFrequency(input.frequency, 2 * input.gridStep);
	if (sampling) {
		warn(
			'period_at_sampling_frequency',
			`P = ${periodDays.toPrecision(6)} d sits on a sampling frequency (${sampling.kind}, harmonic ${sampling.harmonic}); it may be an artefact`,
			'period_days',
			{
				periodDays,
				kind: sampling.kind,
				harmonic: sampling.harmonic
			}
		);
	}
	for (const alias of input.aliases) {
		if (alias.powerRatio >= ALIAS_AMBIGUITY_RATIO) {
			warn(
				'alias_ambiguity',
				`the ${alias.kind.replace('_', '-')} alias at P = ${alias.periodDays.toPrecision(6)} d has ${(100 * alias.powerRatio).toFixed(0)}% of the peak power`,
				'period_days',
				{
					aliasPeriodDays: alias.periodDays,
					kind: alias.kind,
					powerRatio: alias.powerRatio
				}
			);
		}
	}
	const cycles = input.baselineDays / periodDays;
	if (cycles < MIN_CYCLES) {
		warn('few_cycles', `the baseline covers ${cycles.toFixed(1)} cycles`, 'points', { cycles, min: MIN_CYCLES });
	}
	if (input.coverage.largestGap > LARGEST_PHASE_GAP) {
		warn(
			'phase_gap',
			`phase gap of ${input.coverage.largestGap.toFixed(2)} cycles from phase ${input.coverage.largestGapStart.toFixed(2)}; the Fourier model is unconstrained there`,
			'points',
			{
				largestGap: input.coverage.largestGap,
				start: input.coverage.largestGapStart,
				limit: LARGEST_PHASE_GAP
			}
		);
	}
	if (input.reducedChiSquare > POOR_MODEL_REDUCED_CHI_SQUARE) {
		warn(
			'light_curve_model_poor',
			`χ²/ν = ${input.reducedChiSquare.toFixed(1)} (residual RMS ${input.residualRms.toFixed(3)} mag): the periodic model leaves structure, e.g. eclipses or a companion`,
			'fourier_order',
			{
				reducedChiSquare: input.reducedChiSquare,
				residualRms: input.residualRms,
				limit: POOR_MODEL_REDUCED_CHI_SQUARE
			}
		);
	}
	const range = USUAL_AMPLITUDE_RANGE[population];
	const amplitude = input.peakToPeakAmplitude;
	if (amplitude < range.min || amplitude > range.max) {
		warn(
			'amplitude_unusual',
			`peak-to-peak amplitude ${amplitude.toFixed(3)} mag is outside ${range.min}–${range.max} mag, usual for ${population}` +
				(amplitude < range.min
					? '; a low amplitude may also mean blending: light of unresolved neighbours dilutes the variation and brightens the mean magnitude'
					: ''),
			'amplitude',
			{
				amplitude,
				min: range.min,
				max: range.max,
				population
			}
		);
	}
	const r21 = input.shape.r21;
	if (r21 !== null) {
		const overtoneLike =
			population === 'classical_fundamental' &&
			r21 < FUNDAMENTAL_MIN_R21 &&
			(periodDays < HERTZSPRUNG_PROGRESSION_DAYS.min || periodDays > HERTZSPRUNG_PROGRESSION_DAYS.max);
		const fundamentalLike = population === 'classical_first_overtone' && r21 > FIRST_OVERTONE_MAX_R21;
		if (overtoneLike || fundamentalLike) {
			warn(
				'fourier_pattern_unusual',
				`R21 = ${r21.toFixed(3)} is unusual for ${population}${overtoneLike ? ' (nearly sinusoidal, as a first overtone)' : ' (skewed, as a fundamental-mode pulsator)'}`,
				'fourier_order',
				{
					r21,
					population
				}
			);
		}
	}
	return warnings;
}
