/**
 * Evenly spaced trial frequencies (cycles per day) f_k = (firstIndex + k)·step, k = 0 … count − 1.
 *
 * A peak of a series with baseline T is about 1/T wide, so the step is δf = 1/(n_o·T) with n_o samples per
 * peak (n_o = 5–10 is common practice; VanderPlas 2018, ApJS 236, 16, §7.1). Frequencies are whole multiples
 * of the step, which lets the fast periodogram read them straight from FFT bins.
 */
import { CalibrationInputError } from '../types';

export interface FrequencyGrid {
	/** δf (d⁻¹). */
	step: number;
	/** f_0 = firstIndex·step; ≥ 1, so zero frequency is never tried. */
	firstIndex: number;
	count: number;
}

export interface FrequencyGridOptions {
	baselineDays: number;
	/** Shortest period tried (days); default 0.2, below first-overtone Cepheids and RR Lyrae stars. */
	minPeriodDays?: number;
	/** Longest period tried (days); default the baseline itself. */
	maxPeriodDays?: number;
	/** Samples per peak width 1/T; default 5. */
	oversampling?: number;
}

export const DEFAULT_MIN_PERIOD_DAYS = 0.2;
export const DEFAULT_OVERSAMPLING = 5;
/** Guard against grids no request should need (memory, time). */
export const MAX_GRID_COUNT = 5_000_000;

export function gridFrequency(grid: FrequencyGrid, k: number): number {
	return (grid.firstIndex + k) * grid.step;
}

export function gridFrequencies(grid: FrequencyGrid): Float64Array {
	const frequencies = new Float64Array(grid.count);
	for (let k = 0; k < grid.count; k++) frequencies[k] = (grid.firstIndex + k) * grid.step;
	return frequencies;
}

/** The grid for a baseline and a period range, δf = 1/(n_o·T). */
export function automaticFrequencyGrid(options: FrequencyGridOptions): FrequencyGrid {
	const {
		baselineDays,
		minPeriodDays = DEFAULT_MIN_PERIOD_DAYS,
		maxPeriodDays = baselineDays,
		oversampling = DEFAULT_OVERSAMPLING
	} = options;
	const issues = [];
	if (!(baselineDays > 0 && Number.isFinite(baselineDays))) {
		issues.push({ star: null, field: 'points', message: 'the time baseline must be > 0 days' });
	}
	if (!(minPeriodDays > 0 && Number.isFinite(minPeriodDays))) {
		issues.push({ star: null, field: 'min_period_days', message: 'must be a finite number > 0' });
	}
	if (!(maxPeriodDays > minPeriodDays && Number.isFinite(maxPeriodDays))) {
		issues.push({ star: null, field: 'max_period_days', message: 'must be finite and > min_period_days' });
	}
	if (!(oversampling >= 1 && Number.isFinite(oversampling))) {
		issues.push({ star: null, field: 'oversampling', message: 'must be ≥ 1' });
	}
	if (issues.length > 0) throw new CalibrationInputError(issues);
	const step = 1 / (oversampling * baselineDays);
	const firstIndex = Math.max(1, Math.ceil(1 / maxPeriodDays / step));
	const lastIndex = Math.max(firstIndex, Math.floor(1 / minPeriodDays / step));
	const count = lastIndex - firstIndex + 1;
	if (count > MAX_GRID_COUNT) {
		throw new CalibrationInputError([
			{
				star: null,
				field: 'min_period_days',
				message: `the grid would need ${count} frequencies (limit ${MAX_GRID_COUNT}); raise min_period_days or lower the oversampling`
			}
		]);
	}
	return { step, firstIndex, count };
}
