/**
 * A light curve as the core receives it, its validation, and the weighted form the periodograms and
 * fits work on. Weights are w_i = σ_i⁻² / Σσ⁻² (Zechmeister & Kürster 2009, A&A 496, 577, eq. 4–5).
 */
import { CalibrationInputError, type InputIssue } from '../types';
import {
	fullDayOffset,
	isTimeReference,
	TIME_REFERENCES,
	timeFrameOf,
	type TimeFrame,
	type TimeReference
} from './time';

/** [time (days, in the series' reference minus its offset), magnitude, 1σ magnitude error]. */
export type LightCurvePoint = readonly [time: number, mag: number, err: number];

export interface LightCurveSeries {
	id: string;
	band?: string | null;
	timeReference: TimeReference;
	/** Added to every time to get full days, e.g. 2450000 for "HJD − 2450000". */
	timeOffsetDays: number;
	points: readonly LightCurvePoint[];
}

/** Fewest points a series may have: a third-order Fourier model and a period need eight. */
export const MIN_POINTS = 10;

export interface PreparedSeries {
	id: string;
	band: string | null;
	frame: TimeFrame;
	/** Full days (on `frame`) of the earliest point; `t` counts from it. */
	epochZero: number;
	t: Float64Array;
	mag: Float64Array;
	err: Float64Array;
	/** Normalised weights, Σw = 1. */
	weight: Float64Array;
	/** Σ w_i m_i. */
	weightedMeanMag: number;
	baselineDays: number;
}

/** Every problem with a series, each naming the point index and field (`points[12].err`). */
export function seriesIssues(series: LightCurveSeries): InputIssue[] {
	const star = typeof series?.id === 'string' && series.id.length > 0 ? series.id : null;
	const issues: InputIssue[] = [];
	if (star === null) issues.push({ star, field: 'id', message: 'must be a non-empty string' });
	if (!isTimeReference(series?.timeReference)) {
		issues.push({ star, field: 'time_reference', message: `must be one of ${TIME_REFERENCES.join(', ')}` });
	}
	if (!Number.isFinite(series?.timeOffsetDays)) {
		issues.push({ star, field: 'time_offset_days', message: 'must be a finite number of days' });
	}
	if (!Array.isArray(series?.points)) {
		issues.push({ star, field: 'points', message: 'must be a list of [time, mag, err]' });
		return issues;
	}
	if (series.points.length < MIN_POINTS) {
		issues.push({ star, field: 'points', message: `needs at least ${MIN_POINTS} points, got ${series.points.length}` });
	}
	series.points.forEach((point, i) => {
		if (!Array.isArray(point) || point.length !== 3) {
			issues.push({ star, field: `points[${i}]`, message: 'must be [time, mag, err]' });
			return;
		}
		const [time, mag, err] = point;
		if (!Number.isFinite(time)) issues.push({ star, field: `points[${i}].time`, message: 'must be a finite number' });
		if (!Number.isFinite(mag)) issues.push({ star, field: `points[${i}].mag`, message: 'must be a finite number' });
		if (!(Number.isFinite(err) && err > 0)) {
			issues.push({ star, field: `points[${i}].err`, message: 'must be a finite number > 0 (it sets the weight)' });
		}
	});
	if (issues.length === 0) {
		const times = series.points.map((point) => point[0]);
		if (Math.max(...times) === Math.min(...times)) {
			issues.push({ star, field: 'points', message: 'all points share one time; a period needs a baseline' });
		}
	}
	return issues;
}

/** Validates and converts to the weighted form; throws CalibrationInputError with every issue. */
export function prepareSeries(series: LightCurveSeries): PreparedSeries {
	const issues = seriesIssues(series);
	if (issues.length > 0) throw new CalibrationInputError(issues);
	const n = series.points.length;
	let first = Infinity;
	let last = -Infinity;
	for (const [time] of series.points) {
		if (time < first) first = time;
		if (time > last) last = time;
	}
	const t = new Float64Array(n);
	const mag = new Float64Array(n);
	const err = new Float64Array(n);
	const weight = new Float64Array(n);
	let weightSum = 0;
	series.points.forEach(([time, m, e], i) => {
		t[i] = time - first;
		mag[i] = m;
		err[i] = e;
		weight[i] = 1 / (e * e);
		weightSum += weight[i];
	});
	let meanMag = 0;
	for (let i = 0; i < n; i++) {
		weight[i] /= weightSum;
		meanMag += weight[i] * mag[i];
	}
	return {
		id: series.id,
		band: series.band ?? null,
		frame: timeFrameOf(series.timeReference),
		epochZero: first + fullDayOffset(series.timeReference, series.timeOffsetDays),
		t,
		mag,
		err,
		weight,
		weightedMeanMag: meanMag,
		baselineDays: last - first
	};
}

/** Weighted variance of the times, Σw(t − t̄)² (used by the false-alarm estimate). */
export function weightedTimeVariance(series: Pick<PreparedSeries, 't' | 'weight'>): number {
	let mean = 0;
	for (let i = 0; i < series.t.length; i++) mean += series.weight[i] * series.t[i];
	let variance = 0;
	for (let i = 0; i < series.t.length; i++) variance += series.weight[i] * (series.t[i] - mean) ** 2;
	return variance;
}
