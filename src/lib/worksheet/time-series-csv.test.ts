import { describe, expect, test } from 'vitest';
import { parseHostCsv } from './host-csv';
import { bandCautions, hostCsvFromAnalysis, parseTimeSeriesCsv, timeSeriesProblems } from './time-series-csv';

const HEADER = 'star,time,mag,err,band';
/** Ten points of one star at times 1…10. */
const tenPoints = (star: string, band: string) =>
	Array.from({ length: 10 }, (_, i) => `${star},${i + 1},${15 + i / 100},0.02,${band}`);

describe('raw photometry for the light-curve analysis', () => {
	test('groups points into one series per star with the chosen time reference, and keeps each point’s line', () => {
		const lines = [HEADER, 'A,0.5,15.2,0.02,V', ...tenPoints('B', 'V'), ...tenPoints('A', 'V').slice(1)];
		const result = parseTimeSeriesCsv(lines.join('\n') + '\n', 'MJD', 50000);
		expect(result.ok).toBe(true);
		if (!result.ok) return;
		expect(result.series.map((s) => [s.id, s.band, s.time_reference, s.time_offset_days, s.points.length])).toEqual([
			['A', 'V', 'MJD', 50000, 10],
			['B', 'V', 'MJD', 50000, 10]
		]);
		expect(result.series[0].points.slice(0, 2)).toEqual([
			[0.5, 15.2, 0.02],
			[2, 15.01, 0.02]
		]);
		expect(result.lines).toEqual([
			[2, 13, 14, 15, 16, 17, 18, 19, 20, 21],
			[3, 4, 5, 6, 7, 8, 9, 10, 11, 12]
		]);
	});

	test('an empty band is sent as none (a Wesenheit magnitude is no single band)', () => {
		const result = parseTimeSeriesCsv([HEADER, ...tenPoints('W1', '')].join('\n'), 'HJD', 0);
		expect(result.ok && result.series[0].band).toBeNull();
	});

	test('names the line, column, value and reason of each bad point, and refuses two bands for one star', () => {
		const lines = [HEADER, ...tenPoints('A', 'V')];
		lines[2] = 'A,1.5,x,0.02,V';
		lines[3] = 'A,2,15,0,V';
		lines[4] = 'A,3,15,0.02,Ic';
		lines[5] = 'A,4,1e999,0.02,V';
		lines[6] = 'A,5,15,0.02,Q';
		lines[7] = '-A,6,15,0.02,V';
		const result = parseTimeSeriesCsv(lines.join('\n'), 'HJD', 0);
		expect(result.ok).toBe(false);
		if (result.ok) return;
		expect(result.errors.map((e) => [e.line, e.column, e.value])).toEqual([
			[3, 'mag', 'x'],
			[4, 'err', '0'],
			[5, 'band', 'Ic'],
			[6, 'mag', '1e999'],
			[7, 'band', 'Q'],
			[8, 'star', '-A'],
			// Six of A's ten points were refused: the four left are too few for a period.
			[2, 'star', 'A']
		]);
		expect(result.errors[4].message).toContain('leave it empty for a Wesenheit magnitude');
		expect(result.errors[6].message).toBe('has 4 points; a period needs at least 10');
	});

	test('a missing column or an empty file is refused on its line', () => {
		const missing = parseTimeSeriesCsv('# raw\nstar,time,mag,band\n', 'HJD', 0);
		expect(missing.ok === false && missing.errors).toEqual([
			{ line: 2, column: 'err', value: '', message: 'required column is missing' }
		]);
		const empty = parseTimeSeriesCsv('\n\n', 'HJD', 0);
		expect(empty.ok === false && empty.errors[0]).toMatchObject({ line: 1, message: 'no header line and no points' });
	});

	test('the endpoint’s refusals point back into the file where they can', () => {
		const lines = [HEADER, ...tenPoints('A', 'V'), ...tenPoints('B', '')];
		const parsed = parseTimeSeriesCsv(lines.join('\n'), 'HJD', 0);
		if (!parsed.ok) throw new Error('the file should parse');
		const located = timeSeriesProblems(
			[
				{ path: 'series[1].points[3][2]', message: 'must be > 0 (the error sets the weight)' },
				{ path: 'series[0].points[4].mag', message: 'must be a finite number' },
				{ path: 'series[1].points', message: 'all points share one time; a period needs a baseline' },
				{ path: 'max_period_days', message: 'must be greater than min_period_days' }
			],
			parsed
		);
		expect(located.cells).toEqual([
			{ line: 15, column: 'err', value: '0.02', message: 'must be > 0 (the error sets the weight)' },
			{ line: 6, column: 'mag', value: '15.04', message: 'must be a finite number' },
			{ line: 12, column: 'star', value: 'B', message: 'points: all points share one time; a period needs a baseline' }
		]);
		expect(located.other).toEqual(['max_period_days: must be greater than min_period_days']);
	});

	test('the analysis fills id, period, intensity mean and its error, which the host reader accepts as written', () => {
		const csv = hostCsvFromAnalysis([
			{ id: 'A', period_days: 12.345678901234567, mean_mag_intensity: 24.81, mean_mag_intensity_err: 0.0031 }
		]);
		const read = parseHostCsv(csv);
		expect(read).toEqual({
			ok: true,
			stars: [
				{
					id: 'A',
					period_days: 12.345678901234567,
					mean_mag: 24.81,
					mean_mag_err: 0.0031,
					ebv: null,
					ebv_err: null,
					feh: null,
					feh_err: null
				}
			]
		});
	});

	test('a series in another band than the pinned relation is cautioned; no band or no known relation band is not', () => {
		const series = [
			{ id: 'KCS-1', band: 'Ic' },
			{ id: 'KCS-2', band: 'V' },
			{ id: 'KCS-3', band: null }
		];
		expect(bandCautions(series, 'Ic')).toEqual([
			'KCS-2: observed in V, but the pinned relation is in Ic; its mean magnitude is not on the relation’s band.'
		]);
		expect(bandCautions(series, 'W_VI')).toEqual([
			'KCS-1: observed in Ic, but the pinned relation is in W_VI; form the Wesenheit magnitude from both bands before applying it.',
			'KCS-2: observed in V, but the pinned relation is in W_VI; form the Wesenheit magnitude from both bands before applying it.'
		]);
		expect(bandCautions(series, null)).toEqual([]);
	});
});
