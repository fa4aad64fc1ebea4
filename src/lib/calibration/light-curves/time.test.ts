import { describe, expect, test } from 'vitest';
import { CalibrationInputError } from '../types';
import { commonTimeFrame, toFullDays } from './time';

describe('time references', () => {
	// MJD = JD − 2400000.5 (IAU 1997, resolution B1).
	test('MJD 51544.5 is JD 2451545.0 (J2000.0)', () => {
		expect(toFullDays(51544.5, 'MJD', 0)).toBe(2451545);
		expect(toFullDays(1544.5, 'MJD', 50000)).toBe(2451545);
	});

	test('"HJD − 2450000" with offset 2450000 becomes full HJD', () => {
		expect(toFullDays(2171.85654, 'HJD', 2450000)).toBeCloseTo(2452171.85654, 8);
	});

	test('JD and MJD share a frame; HJD and BJD_TDB are never mixed with them or each other', () => {
		expect(
			commonTimeFrame([
				{ id: 'a', timeReference: 'JD', timeOffsetDays: 0 },
				{ id: 'b', timeReference: 'MJD', timeOffsetDays: 0 }
			])
		).toBe('JD');
		let caught: unknown;
		try {
			commonTimeFrame([
				{ id: 'v-band', timeReference: 'HJD', timeOffsetDays: 2450000 },
				{ id: 'i-band', timeReference: 'BJD_TDB', timeOffsetDays: 0 }
			]);
		} catch (error) {
			caught = error;
		}
		expect(caught).toBeInstanceOf(CalibrationInputError);
		expect((caught as CalibrationInputError).issues).toEqual([
			expect.objectContaining({ star: 'i-band', field: 'time_reference' })
		]);
	});
});
