/**
 * Sampling aliases. Ground-based photometry taken at night and in a season repeats at one sidereal day
 * and one year, so a signal at f also shows peaks at |f ± n·f_s| (common practice; e.g. Deeming 1975,
 * Ap&SS 36, 137). We look at the exact periodogram power near f ± 1 sidereal day⁻¹ and f ± 1 yr⁻¹ and
 * flag aliases that come close to the chosen peak, and flag a peak that itself sits near a sampling
 * frequency (n d⁻¹ or n yr⁻¹).
 */
import { powerAt, type WeightedSamples } from './periodogram';

export const SIDEREAL_DAY_FREQUENCY = 1.0027379093;
export const YEAR_FREQUENCY = 1 / 365.25;

export type AliasKind = 'one_day' | 'one_year';

export interface AliasCheck {
	kind: AliasKind;
	/** −1 or +1: f − f_s or f + f_s. */
	side: -1 | 1;
	frequency: number;
	periodDays: number;
	/** Power at the alias peak over the power at the chosen peak. */
	powerRatio: number;
}

/**
 * An alias at least this strong (relative to the chosen peak) makes the period ambiguous. One-day aliases
 * of single-site data commonly reach ~0.8 of a true peak, which the multi-harmonic fit still separates.
 */
export const ALIAS_AMBIGUITY_RATIO = 0.9;

/** Highest exact power within ±span of f, on a fine local grid. */
function localPeak(series: WeightedSamples, frequency: number, span: number): { frequency: number; power: number } {
	const steps = 16;
	let best = { frequency, power: -1 };
	for (let s = -steps; s <= steps; s++) {
		const trial = frequency + (s / steps) * span;
		if (trial <= 0) continue;
		const power = powerAt(series, trial);
		if (power > best.power) best = { frequency: trial, power };
	}
	return best;
}

/**
 * Powers of the one-day and one-year aliases of a peak at `frequency` (power `peakPower`), searched
 * within ±`gridStep` (one periodogram step) of the nominal alias frequency, in [minFrequency, maxFrequency].
 */
export function aliasChecks(
	series: WeightedSamples,
	frequency: number,
	peakPower: number,
	gridStep: number,
	minFrequency: number,
	maxFrequency: number
): AliasCheck[] {
	const checks: AliasCheck[] = [];
	for (const [kind, spacing] of [
		['one_day', SIDEREAL_DAY_FREQUENCY],
		['one_year', YEAR_FREQUENCY]
	] as const) {
		for (const side of [-1, 1] as const) {
			const nominal = Math.abs(frequency + side * spacing);
			if (nominal < minFrequency || nominal > maxFrequency || Math.abs(nominal - frequency) < 2 * gridStep) continue;
			const peak = localPeak(series, nominal, gridStep);
			checks.push({
				kind,
				side,
				frequency: peak.frequency,
				periodDays: 1 / peak.frequency,
				powerRatio: peakPower > 0 ? peak.power / peakPower : 0
			});
		}
	}
	return checks;
}

/** Harmonics of each sampling frequency a period may not sit on: 1, ½, ⅓, ¼ d, and one year. */
const SAMPLING_HARMONICS: Record<AliasKind, number> = { one_day: 4, one_year: 1 };

/** Sampling frequency n·f_s (within the harmonics above) the peak lies within `tolerance` of, if any. */
export function nearSamplingFrequency(
	frequency: number,
	tolerance: number
): { kind: AliasKind; harmonic: number } | null {
	for (const [kind, spacing] of [
		['one_day', SIDEREAL_DAY_FREQUENCY],
		['one_year', YEAR_FREQUENCY]
	] as const) {
		const harmonic = Math.round(frequency / spacing);
		if (
			harmonic >= 1 &&
			harmonic <= SAMPLING_HARMONICS[kind] &&
			Math.abs(frequency - harmonic * spacing) <= tolerance
		) {
			return { kind, harmonic };
		}
	}
	return null;
}
