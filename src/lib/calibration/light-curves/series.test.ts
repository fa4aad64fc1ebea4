import { describe, expect, test } from 'vitest';
import { CalibrationInputError } from '../types';
import { prepareSeries, seriesIssues, type LightCurvePoint, type LightCurveSeries } from './series';

const goodPoints: LightCurvePoint[] = Array.from({ length: 12 }, (_, i) => [
	100 + i * 1.3,
	15 + 0.1 * Math.sin(i),
	0.01
]);

function series(points: LightCurvePoint[], overrides: Partial<LightCurveSeries> = {}): LightCurveSeries {
	return { id: 'star-1', timeReference: 'HJD', timeOffsetDays: 2450000, points, ...overrides };
}

describe('light-curve input', () => {
	test('every bad point is named by index and field', () => {
		const points = goodPoints.map((point) => [...point] as [number, number, number]);
		points[3][0] = Number.NaN;
		points[7][2] = 0;
		points[9][1] = Number.POSITIVE_INFINITY;
		expect(seriesIssues(series(points))).toEqual([
			{ star: 'star-1', field: 'points[3].time', message: 'must be a finite number' },
			{ star: 'star-1', field: 'points[7].err', message: 'must be a finite number > 0 (it sets the weight)' },
			{ star: 'star-1', field: 'points[9].mag', message: 'must be a finite number' }
		]);
	});

	test('unknown time reference, missing offset and too few points are refused together', () => {
		const bad = series(goodPoints.slice(0, 4), { timeReference: 'UTC' as never, timeOffsetDays: Number.NaN });
		expect(() => prepareSeries(bad)).toThrow(CalibrationInputError);
		expect(seriesIssues(bad).map((issue) => issue.field)).toEqual(['time_reference', 'time_offset_days', 'points']);
	});

	test('weights are σ⁻² normalised to 1; times count from the first point, whose full day is kept', () => {
		const points = goodPoints.map(([t, m], i) => [t, m, i === 0 ? 0.02 : 0.01] as LightCurvePoint);
		const prepared = prepareSeries(series(points));
		const total = prepared.weight.reduce((sum, w) => sum + w, 0);
		expect(total).toBeCloseTo(1, 14);
		expect(prepared.weight[1] / prepared.weight[0]).toBeCloseTo(4, 12);
		expect(prepared.t[0]).toBe(0);
		expect(prepared.epochZero).toBe(2450100);
		expect(prepared.baselineDays).toBeCloseTo(11 * 1.3, 12);
	});
});
