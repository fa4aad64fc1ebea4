import { describe, expect, test } from 'vitest';
import { CalibrationInputError } from '../types';
import { automaticFrequencyGrid, gridFrequency } from './frequency-grid';

describe('automatic frequency grid', () => {
	test('step is 1/(oversampling·T) and the range covers [1/P_max, 1/P_min]', () => {
		const grid = automaticFrequencyGrid({
			baselineDays: 2000,
			minPeriodDays: 0.5,
			maxPeriodDays: 200,
			oversampling: 10
		});
		expect(grid.step).toBeCloseTo(1 / 20000, 15);
		expect(gridFrequency(grid, 0)).toBeGreaterThanOrEqual(1 / 200);
		expect(gridFrequency(grid, 0) - grid.step).toBeLessThan(1 / 200);
		expect(gridFrequency(grid, grid.count - 1)).toBeLessThanOrEqual(2);
		expect(gridFrequency(grid, grid.count)).toBeGreaterThan(2);
	});

	test('defaults: 5 samples per peak, periods from 0.2 d to the baseline', () => {
		const grid = automaticFrequencyGrid({ baselineDays: 100 });
		expect(grid.step).toBeCloseTo(1 / 500, 15);
		expect(grid.firstIndex).toBe(5);
		expect(gridFrequency(grid, grid.count - 1)).toBeCloseTo(5, 12);
	});

	test('refuses an inverted period range and an oversized grid', () => {
		expect(() => automaticFrequencyGrid({ baselineDays: 100, minPeriodDays: 5, maxPeriodDays: 2 })).toThrow(
			CalibrationInputError
		);
		expect(() => automaticFrequencyGrid({ baselineDays: 1e6, minPeriodDays: 0.01 })).toThrow(/limit/);
	});
});
