/**
 * One call from a time series to everything a calibrator row or a host-galaxy Cepheid needs: period and
 * its error, false-alarm probability, amplitude, epoch of maximum light, intensity and magnitude means,
 * Fourier order and shape, phase coverage, aliases and warnings. Deterministic: no random numbers, and
 * ties are broken by grid order.
 *
 * Steps: generalised Lomb–Scargle on the automatic grid (exact, or fast for large N·M); the strongest
 * local peaks are polished with exact powers; each candidate (and twice the best period, for curves
 * whose LS peak falls on the first harmonic) is scored by the lowest BIC of its Fourier fits and the best
 * wins; then its period is refined by nonlinear least squares at the BIC order.
 */
import type { CalibrationWarning, Measured, PopulationId } from '../types';
import { aliasChecks, type AliasCheck } from './aliases';
import { falseAlarmProbability } from './false-alarm';
import { fastPeriodogram } from './fast-periodogram';
import {
	chooseFourierOrder,
	DEFAULT_MAX_FOURIER_ORDER,
	fourierMagnitudeAtTime,
	fourierOrderScan,
	fourierShape,
	type FourierShape
} from './fourier-model';
import { automaticFrequencyGrid, gridFrequency, type FrequencyGrid } from './frequency-grid';
import { lightCurveWarnings } from './light-curve-warnings';
import { summariseModel } from './model-summary';
import { refinePeriod } from './period-refinement';
import { exactPeriodogram, powerAt, type Periodogram } from './periodogram';
import { phaseCoverage, type PhaseCoverage } from './phase-coverage';
import { prepareSeries, weightedTimeVariance, type LightCurveSeries, type PreparedSeries } from './series';
import { commonTimeFrame, type TimeFrame } from './time';

export type PeriodogramMethod = 'auto' | 'exact' | 'fast';

export interface LightCurveAnalysisOptions {
	/** Population the star is taken to belong to (sets the warnings); default classical_fundamental. */
	population?: PopulationId;
	minPeriodDays?: number;
	maxPeriodDays?: number;
	oversampling?: number;
	method?: PeriodogramMethod;
	maxFourierOrder?: number;
	/** Periodogram peaks compared by their Fourier fits; default 3. */
	candidates?: number;
	/** Return the periodogram itself (for plots); default false. */
	includePeriodogram?: boolean;
}

export interface LightCurveAnalysis {
	id: string;
	band: string | null;
	timeFrame: TimeFrame;
	nPoints: number;
	baselineDays: number;
	periodDays: number;
	periodErrDays: number;
	frequency: number;
	/** Exact GLS power (standard normalisation) at the refined frequency. */
	peakPower: number;
	/** Baluev (2008) bound for the highest periodogram peak on the searched grid (is there a signal at all). */
	falseAlarmProbability: number;
	periodogramMethod: 'exact' | 'fast';
	/** Peak-to-peak amplitude of the Fourier model (mag). */
	amplitude: number;
	/** Time of maximum light (minimum magnitude), full days on `timeFrame`, nearest the mean epoch. */
	epochOfMaximum: number;
	meanMagIntensity: Measured;
	meanMagMagnitude: Measured;
	fourierOrder: number;
	fourier: FourierShape;
	/** χ²/ν of the final model with the stated errors. */
	reducedChiSquare: number;
	residualRms: number;
	phaseCoverage: PhaseCoverage;
	aliases: AliasCheck[];
	warnings: CalibrationWarning[];
	periodogram?: { step: number; firstIndex: number; count: number; power: number[] };
}

/** Above this N·M the fast periodogram is used under `method: 'auto'`. */
export const FAST_METHOD_THRESHOLD = 5_000_000;

function periodogramOf(series: PreparedSeries, grid: FrequencyGrid, method: PeriodogramMethod): Periodogram {
	const useFast = method === 'fast' || (method === 'auto' && series.t.length * grid.count > FAST_METHOD_THRESHOLD);
	return useFast ? fastPeriodogram(series, grid) : exactPeriodogram(series, grid);
}

/** Indices of the `count` highest local maxima, highest first. */
function topPeaks(power: Float64Array, count: number): number[] {
	const peaks: number[] = [];
	for (let k = 0; k < power.length; k++) {
		const left = k === 0 ? -Infinity : power[k - 1];
		const right = k === power.length - 1 ? -Infinity : power[k + 1];
		if (power[k] > left && power[k] >= right) peaks.push(k);
	}
	return peaks.sort((a, b) => power[b] - power[a] || a - b).slice(0, count);
}

/** Exact power maximised within ±½ grid step by halving steps (a grid peak may be a fast-method estimate). */
function polishPeak(series: PreparedSeries, frequency: number, step: number): { frequency: number; power: number } {
	let best = { frequency, power: powerAt(series, frequency) };
	for (let span = step / 2; span > step / 64; span /= 2) {
		for (const trial of [best.frequency - span, best.frequency + span]) {
			const power = powerAt(series, trial);
			if (power > best.power) best = { frequency: trial, power };
		}
	}
	return best;
}

export function analyseLightCurve(
	series: LightCurveSeries,
	options: LightCurveAnalysisOptions = {}
): LightCurveAnalysis {
	const prepared = prepareSeries(series);
	const population = options.population ?? 'classical_fundamental';
	const maxOrder = options.maxFourierOrder ?? DEFAULT_MAX_FOURIER_ORDER;
	const grid = automaticFrequencyGrid({
		baselineDays: prepared.baselineDays,
		minPeriodDays: options.minPeriodDays,
		maxPeriodDays: options.maxPeriodDays,
		oversampling: options.oversampling
	});
	const periodogram = periodogramOf(prepared, grid, options.method ?? 'auto');
	const peaks = topPeaks(periodogram.power, options.candidates ?? 3).map((k) =>
		polishPeak(prepared, gridFrequency(grid, k), grid.step)
	);
	const strongest = peaks.reduce((best, peak) => (peak.power > best.power ? peak : best), peaks[0]);
	const minFrequency = gridFrequency(grid, 0);
	const maxFrequency = gridFrequency(grid, grid.count - 1);

	const trials = peaks.map((peak) => peak.frequency);
	const doubledPeriod = strongest.frequency / 2;
	if (doubledPeriod >= minFrequency) trials.push(doubledPeriod);
	let start = trials[0];
	let lowestBic = Infinity;
	for (const trial of trials) {
		const bic = Math.min(...fourierOrderScan(prepared, trial, maxOrder).map((entry) => entry.bic));
		if (bic < lowestBic) {
			lowestBic = bic;
			start = trial;
		}
	}
	const firstOrder = chooseFourierOrder(prepared, start, maxOrder).fit.order;
	const firstPass = refinePeriod(prepared, start, firstOrder, grid.step / 4);
	const order = chooseFourierOrder(prepared, firstPass.frequency, maxOrder, firstPass.fit.timeZero).fit.order;
	const refined = order === firstOrder ? firstPass : refinePeriod(prepared, firstPass.frequency, order, grid.step / 16);
	const { fit } = refined;

	const peakPower = powerAt(prepared, refined.frequency);
	const fap = falseAlarmProbability({
		power: Math.max(peakPower, strongest.power),
		nPoints: prepared.t.length,
		maxFrequency,
		weightedTimeVariance: weightedTimeVariance(prepared)
	});
	const summary = summariseModel(fit, refined.covarianceScale);
	const shape = fourierShape(fit);
	const coverage = phaseCoverage(prepared.t, refined.frequency, fit.timeZero);
	// At twice the periodogram's period the signal's own peak (at 2f) is the one whose aliases matter.
	const aliasReference = start === doubledPeriod ? strongest : { frequency: refined.frequency, power: peakPower };
	const aliases = aliasChecks(
		prepared,
		aliasReference.frequency,
		aliasReference.power,
		grid.step,
		minFrequency,
		maxFrequency
	);
	let squares = 0;
	for (let i = 0; i < prepared.t.length; i++)
		squares += (prepared.mag[i] - fourierMagnitudeAtTime(fit, prepared.t[i])) ** 2;
	const residualRms = Math.sqrt(squares / prepared.t.length);
	const reducedChiSquare = fit.degreesOfFreedom > 0 ? fit.chiSquare / fit.degreesOfFreedom : Number.NaN;
	const warnings = lightCurveWarnings({
		id: prepared.id,
		population,
		periodDays: refined.periodDays,
		frequency: refined.frequency,
		gridStep: grid.step,
		baselineDays: prepared.baselineDays,
		falseAlarmProbability: fap,
		peakToPeakAmplitude: summary.peakToPeakAmplitude,
		shape,
		coverage,
		aliases,
		reducedChiSquare,
		residualRms
	});
	return {
		id: prepared.id,
		band: prepared.band,
		timeFrame: prepared.frame,
		nPoints: prepared.t.length,
		baselineDays: prepared.baselineDays,
		periodDays: refined.periodDays,
		periodErrDays: refined.periodErrDays,
		frequency: refined.frequency,
		peakPower,
		falseAlarmProbability: fap,
		periodogramMethod: periodogram.method,
		amplitude: summary.peakToPeakAmplitude,
		epochOfMaximum: prepared.epochZero + fit.timeZero + summary.phaseOfMaximumLight * refined.periodDays,
		meanMagIntensity: summary.meanMagIntensity,
		meanMagMagnitude: summary.meanMagMagnitude,
		fourierOrder: fit.order,
		fourier: shape,
		reducedChiSquare,
		residualRms,
		phaseCoverage: coverage,
		aliases,
		warnings,
		...(options.includePeriodogram ? { periodogram: { ...grid, power: Array.from(periodogram.power) } } : {})
	};
}

/**
 * Analyses several series (a batch, or the bands of one star) independently, in input order. Series that
 * share an id are bands of one star and must share a time frame: HJD, BJD_TDB and JD/MJD are refused
 * together rather than silently mixed.
 */
export function analyseLightCurves(
	series: readonly LightCurveSeries[],
	options: LightCurveAnalysisOptions = {}
): LightCurveAnalysis[] {
	const byStar = new Map<string, LightCurveSeries[]>();
	for (const entry of series) byStar.set(entry.id, [...(byStar.get(entry.id) ?? []), entry]);
	for (const bands of byStar.values()) if (bands.length > 1) commonTimeFrame(bands);
	return series.map((entry) => analyseLightCurve(entry, options));
}
