import Papa from 'papaparse';
import { isSingleBandId, SINGLE_BAND_IDS } from '../calibration/bands';
import { MIN_POINTS } from '../calibration/light-curves/series';
import { STAR_ID_PATTERN, STAR_ID_RULE } from '../calibration/light-curves/upload-table';
import type { CsvCellError } from './host-csv';
import { HOST_COLUMNS } from './host-csv';

/**
 * Raw photometry (CSV columns star, time, mag, err, band) grouped into one series per star for
 * POST /api/v1/light-curves/analyse, and the analysis turned back into host-table rows. The parser
 * checks what the endpoint checks, so a refusal names the file's line and column rather than a
 * position in a request the observer never saw.
 */
export const TIME_SERIES_COLUMNS = ['star', 'time', 'mag', 'err', 'band'] as const;
export const TIME_REFERENCE_CHOICES = ['HJD', 'BJD_TDB', 'JD', 'MJD'] as const;

export interface TimeSeries {
	id: string;
	/** Null where the band cells are empty (e.g. a Wesenheit magnitude, which is no single band). */
	band: string | null;
	time_reference: string;
	time_offset_days: number;
	points: [number, number, number][];
}

/** The file's line of every point: `lines[i][j]` is the line of `series[i].points[j]`. */
export type TimeSeriesResult =
	{ ok: true; series: TimeSeries[]; lines: number[][] } | { ok: false; errors: CsvCellError[] };

const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
const MAX_ERRORS = 100;
const POINT_COLUMNS = ['time', 'mag', 'err'] as const;

export function parseTimeSeriesCsv(text: string, timeReference: string, timeOffsetDays: number): TimeSeriesResult {
	const rows = Papa.parse<string[]>(text.replace(/^\uFEFF/, ''), { skipEmptyLines: false }).data;
	const errors: CsvCellError[] = [];
	const push = (error: CsvCellError) => {
		if (errors.length < MAX_ERRORS) errors.push(error);
	};
	const skipped = (row: string[]) => row.every((cell) => cell.trim() === '') || row[0].trimStart().startsWith('#');
	const headerIndex = rows.findIndex((row) => !skipped(row));
	if (headerIndex < 0)
		return { ok: false, errors: [{ line: 1, column: '', value: '', message: 'no header line and no points' }] };
	const header = rows[headerIndex].map((cell) => cell.trim());
	for (const name of TIME_SERIES_COLUMNS) {
		if (!header.includes(name))
			push({ line: headerIndex + 1, column: name, value: '', message: 'required column is missing' });
	}
	if (errors.length > 0) return { ok: false, errors };
	const at = Object.fromEntries(TIME_SERIES_COLUMNS.map((name) => [name, header.indexOf(name)])) as Record<
		(typeof TIME_SERIES_COLUMNS)[number],
		number
	>;
	const byStar = new Map<string, { series: TimeSeries; lines: number[] }>();
	for (let r = headerIndex + 1; r < rows.length && errors.length < MAX_ERRORS; r++) {
		if (skipped(rows[r])) continue;
		const row = rows[r].map((cell) => cell.trim());
		const line = r + 1;
		const star = row[at.star] ?? '';
		const band = row[at.band] ?? '';
		let bad = false;
		const fail = (column: string, value: string, message: string) => {
			bad = true;
			push({ line, column, value, message });
		};
		if (!star) fail('star', star, 'a point needs a star id');
		else if (!STAR_ID_PATTERN.test(star)) fail('star', star, STAR_ID_RULE);
		if (band && !isSingleBandId(band))
			fail(
				'band',
				band,
				`is not a single band (${SINGLE_BAND_IDS.join(', ')}); leave it empty for a Wesenheit magnitude`
			);
		const values = POINT_COLUMNS.map((name) => {
			const value = row[at[name]] ?? '';
			const number = Number(value);
			if (!NUMBER.test(value)) fail(name, value, 'is not a number');
			else if (!Number.isFinite(number)) fail(name, value, 'is not a finite number');
			else if (name === 'err' && !(number > 0)) fail(name, value, 'must be greater than 0');
			return number;
		}) as [number, number, number];
		if (bad) continue;
		const known = byStar.get(star);
		if (known && known.series.band !== (band || null)) {
			fail(
				'band',
				band,
				`star ${star} is in band ${known.series.band ?? '(none)'} on line ${known.lines[0]}; give one band per star`
			);
			continue;
		}
		if (known) {
			known.series.points.push(values);
			known.lines.push(line);
		} else
			byStar.set(star, {
				series: {
					id: star,
					band: band || null,
					time_reference: timeReference,
					time_offset_days: timeOffsetDays,
					points: [values]
				},
				lines: [line]
			});
	}
	if (errors.length === 0 && byStar.size === 0)
		push({ line: headerIndex + 2, column: '', value: '', message: 'no points below the header' });
	for (const { series, lines } of byStar.values()) {
		if (series.points.length < MIN_POINTS)
			push({
				line: lines[0],
				column: 'star',
				value: series.id,
				message: `has ${series.points.length} points; a period needs at least ${MIN_POINTS}`
			});
	}
	if (errors.length > 0) return { ok: false, errors };
	const entries = [...byStar.values()];
	return { ok: true, series: entries.map((entry) => entry.series), lines: entries.map((entry) => entry.lines) };
}

/**
 * The endpoint's refusals (`series[2].points[17][1]`, `series[0].points`, `min_period_days`) as cells
 * of the file where they point into it; the rest stay as text.
 */
export function timeSeriesProblems(
	problems: readonly { path: string; message: string }[],
	parsed: { series: readonly TimeSeries[]; lines: readonly number[][] }
): { cells: CsvCellError[]; other: string[] } {
	const cells: CsvCellError[] = [];
	const other: string[] = [];
	for (const problem of problems) {
		const match = /^series\[(\d+)\](?:\.(\w+))?(?:\[(\d+)\])?(?:\[(\d)\]|\.(time|mag|err))?/.exec(problem.path);
		const index = match ? Number(match[1]) : -1;
		const series = parsed.series[index];
		if (!match || !series) {
			other.push(`${problem.path}: ${problem.message}`);
			continue;
		}
		const point = match[3] === undefined ? null : Number(match[3]);
		const field = match[4] !== undefined ? POINT_COLUMNS[Number(match[4])] : match[5];
		const line = parsed.lines[index][point ?? 0] ?? parsed.lines[index][0];
		if (point !== null && field) {
			const value = series.points[point]?.[POINT_COLUMNS.indexOf(field as (typeof POINT_COLUMNS)[number])];
			cells.push({ line, column: field, value: String(value ?? ''), message: problem.message });
		} else {
			const column = match[2] === 'band' ? 'band' : 'star';
			const value = match[2] === 'band' ? (series.band ?? '') : series.id;
			cells.push({ line, column, value, message: `${match[2] ?? 'series'}: ${problem.message}` });
		}
	}
	return { cells, other };
}

export interface AnalysedStar {
	id: string;
	period_days: number;
	mean_mag_intensity: number;
	mean_mag_intensity_err: number;
}

/**
 * Host-table CSV from the analysis: the period and the intensity-mean magnitude (the mean a PL
 * relation expects) with the error of that mean from the Fourier fit. That error is photometric noise
 * only, so an observer whose zero point is less certain raises it before computing distances.
 */
export function hostCsvFromAnalysis(results: readonly AnalysedStar[]): string {
	const rows = results.map((star) => [
		star.id,
		star.period_days,
		star.mean_mag_intensity,
		star.mean_mag_intensity_err,
		'',
		'',
		'',
		''
	]);
	return Papa.unparse({ fields: [...HOST_COLUMNS], data: rows }, { newline: '\n' }) + '\n';
}

/**
 * Series observed in another band than the pinned relation's: their mean magnitudes do not belong on
 * that relation (a Wesenheit relation needs the Wesenheit magnitude formed from both bands). Common
 * practice; series without a band, or an unknown relation band, give no caution.
 */
export function bandCautions(series: readonly { id: string; band?: string | null }[], relationBand: string | null) {
	if (!relationBand) return [];
	const remedy = isSingleBandId(relationBand)
		? 'its mean magnitude is not on the relation’s band'
		: 'form the Wesenheit magnitude from both bands before applying it';
	return series
		.filter((one) => one.band && one.band !== relationBand)
		.map((one) => `${one.id}: observed in ${one.band}, but the pinned relation is in ${relationBand}; ${remedy}.`);
}
