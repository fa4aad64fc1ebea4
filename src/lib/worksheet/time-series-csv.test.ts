import { describe, expect, test } from 'vitest';
import { parseHostCsv } from './host-csv';
import { hostCsvFromAnalysis, parseTimeSeriesCsv } from './time-series-csv';

describe('raw photometry for the light-curve analysis', () => {
	test('groups points into one series per star with the chosen time reference', () => {
		const result = parseTimeSeriesCsv(
			'star,time,mag,err,band\nA,1.5,15.2,0.02,V\nB,1.6,16.1,0.03,V\nA,2.5,15.4,0.02,V\n',
			'MJD',
			50000
		);
		expect(result).toEqual({
			ok: true,
			series: [
				{
					id: 'A',
					band: 'V',
					time_reference: 'MJD',
					time_offset_days: 50000,
					points: [
						[1.5, 15.2, 0.02],
						[2.5, 15.4, 0.02]
					]
				},
				{ id: 'B', band: 'V', time_reference: 'MJD', time_offset_days: 50000, points: [[1.6, 16.1, 0.03]] }
			]
		});
	});

	test('names the line, column, value and reason of each bad point, and refuses two bands for one star', () => {
		const result = parseTimeSeriesCsv('star,time,mag,err,band\nA,1.5,x,0.02,V\nA,2,15,0,V\nA,3,15,0.02,Ic\n', 'HJD', 0);
		expect(result.ok).toBe(false);
		if (result.ok) return;
		expect(result.errors.map((e) => [e.line, e.column, e.value])).toEqual([
			[2, 'mag', 'x'],
			[3, 'err', '0'],
			[4, 'band', 'Ic']
		]);
	});

	test('the analysis fills id, period and intensity mean; the host reader then asks for the missing mean_mag_err', () => {
		const csv = hostCsvFromAnalysis([{ id: 'A', period_days: 12.3, mean_mag_intensity: 24.81 }]);
		const read = parseHostCsv(csv);
		expect(read.ok).toBe(false);
		if (read.ok) return;
		expect(read.errors).toEqual([{ line: 2, column: 'mean_mag_err', value: '', message: 'is required' }]);
	});
});
