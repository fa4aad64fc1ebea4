import Papa from 'papaparse';
import type { CsvCellError } from './host-csv';
import { HOST_COLUMNS } from './host-csv';

/**
 * Raw photometry (CSV columns star, time, mag, err, band) grouped into one series per star for
 * POST /api/v1/light-curves/analyse, and the analysis turned back into host-table rows.
 */
export const TIME_SERIES_COLUMNS = ['star', 'time', 'mag', 'err', 'band'] as const;
export const TIME_REFERENCE_CHOICES = ['HJD', 'BJD_TDB', 'JD', 'MJD'] as const;

export interface TimeSeries {
	id: string;
	band: string;
	time_reference: string;
	time_offset_days: number;
	points: [number, number, number][];
}

export type TimeSeriesResult = { ok: true; series: TimeSeries[] } | { ok: false; errors: CsvCellError[] };

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export function parseTimeSeriesCsv(text: string, timeReference: string, timeOffsetDays: number): TimeSeriesResult {
	const rows = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: false }).data;
	const errors: CsvCellError[] = [];
	const headerIndex = rows.findIndex((row) => row.some((cell) => cell.trim() !== '') && !row[0].startsWith('#'));
	const header = headerIndex < 0 ? [] : rows[headerIndex].map((cell) => cell.trim());
	for (const name of TIME_SERIES_COLUMNS) {
		if (!header.includes(name))
			errors.push({ line: headerIndex + 1, column: name, value: '', message: 'required column is missing' });
	}
	if (errors.length > 0) return { ok: false, errors };
	const at = Object.fromEntries(TIME_SERIES_COLUMNS.map((name) => [name, header.indexOf(name)])) as Record<
		(typeof TIME_SERIES_COLUMNS)[number],
		number
	>;
	const byStar = new Map<string, TimeSeries>();
	for (let r = headerIndex + 1; r < rows.length && errors.length < 100; r++) {
		const row = rows[r].map((cell) => cell.trim());
		if (row.every((cell) => cell === '') || row[0].startsWith('#')) continue;
		const line = r + 1;
		const star = row[at.star] ?? '';
		const band = row[at.band] ?? '';
		if (!star) errors.push({ line, column: 'star', value: star, message: 'a point needs a star id' });
		const values = (['time', 'mag', 'err'] as const).map((name) => {
			const value = row[at[name]] ?? '';
			if (!NUMBER.test(value)) errors.push({ line, column: name, value, message: 'is not a number' });
			else if (name === 'err' && !(Number(value) > 0))
				errors.push({ line, column: name, value, message: 'must be greater than 0' });
			return Number(value);
		});
		if (!star) continue;
		const series = byStar.get(star);
		if (series && series.band !== band) {
			errors.push({
				line,
				column: 'band',
				value: band,
				message: `star ${star} is in band ${series.band} on an earlier line; give one band per star`
			});
			continue;
		}
		if (series) series.points.push(values as [number, number, number]);
		else
			byStar.set(star, {
				id: star,
				band,
				time_reference: timeReference,
				time_offset_days: timeOffsetDays,
				points: [values as [number, number, number]]
			});
	}
	if (errors.length === 0 && byStar.size === 0)
		errors.push({ line: headerIndex + 2, column: '', value: '', message: 'no points below the header' });
	return errors.length > 0 ? { ok: false, errors } : { ok: true, series: [...byStar.values()] };
}

export interface AnalysedStar {
	id: string;
	period_days: number;
	mean_mag_intensity: number;
}

/**
 * Host-table CSV from the analysis: the period and the intensity-mean magnitude (the mean a PL
 * relation expects). The analysis gives no error for the mean, so mean_mag_err is left for the
 * observer to fill in, and the worksheet refuses to run until they do.
 */
export function hostCsvFromAnalysis(results: readonly AnalysedStar[]): string {
	const rows = results.map((star) => [star.id, star.period_days, star.mean_mag_intensity, '', '', '', '', '']);
	return Papa.unparse({ fields: [...HOST_COLUMNS], data: rows }, { newline: '\n' }) + '\n';
}
