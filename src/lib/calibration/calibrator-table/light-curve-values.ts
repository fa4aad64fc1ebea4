import { isSingleBandId } from '../bands';
import type { CanonicalRow, CellValue, MappedColumn, TableIssue } from './parse';

/**
 * Takes periods and mean magnitudes for a calibrator table from light-curve analyses, and records for
 * every value written which analysis it came from. The period of a star comes from its most precise
 * band (the period is the same in every band); each band's magnitude is that band's intensity-averaged
 * mean, the mean PL relations are built on (common practice). Values travel in pairs: a value and its
 * error are always taken together from one analysis.
 */
export interface LightCurveAnalysisValues {
	result: string;
	upload: string;
	/** Digest of the raw time-series file the analysis read. */
	sourceDigest: string;
	engineVersion: string;
	star: string;
	band: string | null;
	population: string;
	periodDays: number;
	periodErrDays: number;
	meanMagIntensity: number;
	meanMagIntensityErr: number;
	/** Warning codes of the analysis (for example a period outside the population's range). */
	warnings: string[];
}

/** `blank`: fill only cells the table leaves empty; `all`: the analysis replaces the table's values too. */
export type LightCurveFill = 'blank' | 'all';
export const LIGHT_CURVE_FILLS: readonly LightCurveFill[] = ['blank', 'all'];

export type LightCurveQuantity = 'period_days' | 'period_err_days' | 'mean_mag_intensity' | 'mean_mag_intensity_err';

/** One value of a frozen revision and the analysis it was taken from. */
export interface ValueSource {
	star: string;
	field: string;
	value: number;
	/** What the uploaded table held in that cell, or null if it was empty or the column absent. */
	replaced: CellValue;
	light_curve: {
		result: string;
		upload: string;
		source_digest: string;
		band: string | null;
		quantity: LightCurveQuantity;
		engine_version: string;
	};
}

export interface LightCurveNotice {
	star: string;
	band: string | null;
	reason: string;
}

export interface LightCurveTake {
	columns: MappedColumn[];
	rows: CanonicalRow[];
	sources: ValueSource[];
	/** Rows still missing a required value, by line and column as in the uploaded file. */
	issues: TableIssue[];
	/** Analyses that were not used, and analyses used with a caution. */
	notices: LightCurveNotice[];
}

/** The source column recorded for a field the uploaded file did not have. */
export const LIGHT_CURVE_COLUMN = '(light-curve analysis)';

interface FieldPair {
	value: string;
	error: string;
	quantities: [LightCurveQuantity, LightCurveQuantity];
	pick: (analysis: LightCurveAnalysisValues) => [number, number];
}

const PERIOD_PAIR: FieldPair = {
	value: 'period_days',
	error: 'period_err_days',
	quantities: ['period_days', 'period_err_days'],
	pick: (analysis) => [analysis.periodDays, analysis.periodErrDays]
};

const magnitudePair = (band: string): FieldPair => ({
	value: `mag_${band}`,
	error: `mag_err_${band}`,
	quantities: ['mean_mag_intensity', 'mean_mag_intensity_err'],
	pick: (analysis) => [analysis.meanMagIntensity, analysis.meanMagIntensityErr]
});

const isBlank = (value: CellValue | undefined) => value === null || value === undefined || value === '';

/**
 * Rows are matched on `star`, or else on `cross_id`. The table's rows are in file order (line = index
 * + 2, the header being line 1), as the parser returns them.
 */
export function takeLightCurveValues(
	table: { columns: MappedColumn[]; rows: CanonicalRow[] },
	analyses: LightCurveAnalysisValues[],
	fill: LightCurveFill,
	requiredFields: readonly string[] = ['period_days']
): LightCurveTake {
	const columns = table.columns.map((column) => ({ ...column }));
	const sources: ValueSource[] = [];
	const notices: LightCurveNotice[] = [];

	const rowOf = matchRows(table.rows);
	const byRow = new Map<CanonicalRow, LightCurveAnalysisValues[]>();
	for (const analysis of analyses) {
		const row = rowOf(analysis.star);
		if (!row) {
			notices.push({ star: analysis.star, band: analysis.band, reason: 'no row of the table has this star' });
			continue;
		}
		byRow.set(row, [...(byRow.get(row) ?? []), analysis]);
	}

	// Writes are collected first and every row is built once at the end with all its keys: adding keys
	// to thousands of existing objects one by one costs far more than the rest of the work.
	const writes = new Map<CanonicalRow, Record<string, CellValue>>();
	const cell = (row: CanonicalRow, field: string): CellValue => {
		const written = writes.get(row);
		return written && field in written ? written[field] : (row.values[field] ?? null);
	};
	const write = (row: CanonicalRow, field: string, value: CellValue) => {
		const written = writes.get(row) ?? {};
		written[field] = value;
		writes.set(row, written);
	};
	const ensureColumn = (field: string, unit: string) => {
		if (!columns.some((column) => column.field === field))
			columns.push({ field, source_column: LIGHT_CURVE_COLUMN, unit });
	};

	const take = (row: CanonicalRow, pair: FieldPair, analysis: LightCurveAnalysisValues, unit: string) => {
		if (fill === 'blank' && !isBlank(cell(row, pair.value))) return;
		const values = pair.pick(analysis);
		if (!Number.isFinite(values[0])) return;
		ensureColumn(pair.value, unit);
		ensureColumn(pair.error, unit);
		[pair.value, pair.error].forEach((field, i) => {
			// An error the analysis could not estimate is written as missing, not as the table's old one.
			if (!Number.isFinite(values[i])) {
				write(row, field, null);
				return;
			}
			sources.push({
				star: row.star,
				field,
				value: values[i],
				replaced: cell(row, field),
				light_curve: {
					result: analysis.result,
					upload: analysis.upload,
					source_digest: analysis.sourceDigest,
					band: analysis.band,
					quantity: pair.quantities[i],
					engine_version: analysis.engineVersion
				}
			});
			write(row, field, values[i]);
		});
	};

	for (const [row, found] of byRow) {
		const population = row.values.population;
		for (const analysis of found) {
			if (typeof population === 'string' && analysis.population !== population) {
				notices.push({
					star: row.star,
					band: analysis.band,
					reason: `analysed as ${analysis.population}, but the row's population is ${population}`
				});
			}
			for (const code of analysis.warnings)
				notices.push({ star: row.star, band: analysis.band, reason: `the analysis warns: ${code}` });
		}
		const mostPrecise = [...found].sort((a, b) => a.periodErrDays - b.periodErrDays)[0];
		take(row, PERIOD_PAIR, mostPrecise, 'd');
		for (const analysis of found) {
			if (analysis.band === null || !isSingleBandId(analysis.band)) {
				notices.push({
					star: row.star,
					band: analysis.band,
					reason:
						analysis.band === null
							? 'the series has no band, so its mean magnitude was not used'
							: `${analysis.band} is not a catalogued band, so its mean magnitude was not used`
				});
				continue;
			}
			take(row, magnitudePair(analysis.band), analysis, 'mag');
		}
	}

	const added = Object.fromEntries(
		columns
			.filter((column) => !table.columns.some((own) => own.field === column.field))
			.map((column) => [column.field, null])
	);
	// Object.assign rather than a spread of several objects: V8 builds the latter on a far slower path.
	const rows = table.rows.map((row) => ({
		star: row.star,
		values: Object.assign({}, row.values, added, writes.get(row)) as Record<string, CellValue>
	}));

	const issues: TableIssue[] = [];
	rows.forEach((row, index) => {
		for (const field of requiredFields) {
			if (!isBlank(row.values[field])) continue;
			const column = columns.find((candidate) => candidate.field === field);
			issues.push({
				line: index + 2,
				column: column && column.source_column !== LIGHT_CURVE_COLUMN ? column.source_column : field,
				value: '',
				reason: `is empty, and no light-curve analysis of ${row.star} fills it`
			});
		}
	});
	return { columns, rows, sources, issues, notices };
}

/** Finds a table row by star name first, then by cross-identification. */
function matchRows(rows: CanonicalRow[]) {
	const byStar = new Map(rows.map((row) => [row.star, row]));
	const byCrossId = new Map<string, CanonicalRow>();
	for (const row of rows) {
		const crossId = row.values.cross_id;
		if (typeof crossId === 'string' && crossId !== '') byCrossId.set(crossId, row);
	}
	return (star: string) => byStar.get(star) ?? byCrossId.get(star) ?? null;
}
