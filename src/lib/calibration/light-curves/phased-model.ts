/**
 * What a light-curve analysis needs to be stored and drawn: the Fourier coefficients with phase zero at
 * the epoch of maximum light, the points folded on the period, and a periodogram thinned for plotting.
 *
 * The coefficients describe m(φ) = A₀ + Σₖ aₖ cos 2πkφ + bₖ sin 2πkφ with φ = (t − E_max)/P mod 1, t in
 * full days on the series' frame. Fitting again at the analysis' own frequency with the time zero moved
 * to E_max is a linear reparametrisation of the analysis' model (same χ², same curve).
 */
import { fitFourier, fourierMagnitudeAtPhase } from './fourier-model';
import type { LightCurveAnalysis } from './light-curve-analysis';
import { prepareSeries, type LightCurveSeries } from './series';

export interface PhasedModel {
	periodDays: number;
	epochOfMaximum: number;
	order: number;
	/** [A₀, a₁, b₁, a₂, b₂, …] in magnitudes. */
	coefficients: number[];
}

export function phasedModel(
	series: LightCurveSeries,
	analysis: Pick<LightCurveAnalysis, 'periodDays' | 'epochOfMaximum' | 'fourierOrder'>
): PhasedModel {
	const prepared = prepareSeries(series);
	const fit = fitFourier(
		prepared,
		1 / analysis.periodDays,
		analysis.fourierOrder,
		analysis.epochOfMaximum - prepared.epochZero
	);
	return {
		periodDays: analysis.periodDays,
		epochOfMaximum: analysis.epochOfMaximum,
		order: fit.order,
		coefficients: fit.coefficients
	};
}

export function modelMagnitude(model: Pick<PhasedModel, 'order' | 'coefficients'>, phase: number): number {
	return fourierMagnitudeAtPhase(model, phase);
}

/** The model sampled at `samples` evenly spaced phases over [0, 1]. */
export function modelCurve(
	model: Pick<PhasedModel, 'order' | 'coefficients'>,
	samples = 200
): { phase: number; mag: number }[] {
	return Array.from({ length: samples + 1 }, (_, i) => ({
		phase: i / samples,
		mag: modelMagnitude(model, i / samples)
	}));
}

export interface FoldedPoint {
	phase: number;
	mag: number;
	err: number;
}

/** Each point's phase (0–1) from the epoch of maximum light. */
export function phasePoints(
	series: LightCurveSeries,
	model: Pick<PhasedModel, 'periodDays' | 'epochOfMaximum'>
): FoldedPoint[] {
	const offset = series.timeOffsetDays + (series.timeReference === 'MJD' ? 2400000.5 : 0);
	return series.points.map(([time, mag, err]) => {
		const cycles = (time + offset - model.epochOfMaximum) / model.periodDays;
		return { phase: cycles - Math.floor(cycles), mag, err };
	});
}

export interface PeriodogramCurve {
	/** Frequencies (d⁻¹) and powers, thinned. */
	frequency: number[];
	power: number[];
}

/**
 * Keeps at most `maxPoints` points of a periodogram by taking the highest power in each run of
 * neighbouring frequencies, so every peak survives the thinning at its own height.
 */
export function thinPeriodogram(
	periodogram: { step: number; firstIndex: number; count: number; power: ArrayLike<number> },
	maxPoints = 2000
): PeriodogramCurve {
	const { step, firstIndex, count, power } = periodogram;
	const run = Math.max(1, Math.ceil(count / maxPoints));
	const frequency: number[] = [];
	const kept: number[] = [];
	for (let start = 0; start < count; start += run) {
		let best = start;
		for (let k = start + 1; k < Math.min(count, start + run); k++) if (power[k] > power[best]) best = k;
		frequency.push((firstIndex + best) * step);
		kept.push(power[best]);
	}
	return { frequency, power: kept };
}
