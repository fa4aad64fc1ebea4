import {
	analyseLightCurve,
	CalibrationInputError,
	commonTimeFrame,
	ENGINE_VERSION,
	phasedModel,
	seriesIssues,
	thinPeriodogram,
	type InputIssue,
	type LightCurveAnalysis,
	type LightCurveSeries,
	type PhasedModel,
	type PeriodogramCurve,
	type PopulationId
} from '../../calibration/index';

/**
 * Runs the light-curve engine over a batch of series, one after another, reporting progress after
 * each. Every series is checked before the first is analysed, so a bad batch is refused whole.
 */
export interface BatchSeries extends LightCurveSeries {
	population: PopulationId;
}

export interface BatchOptions {
	minPeriodDays?: number;
	maxPeriodDays?: number;
}

export interface AnalysedSeries {
	series: BatchSeries;
	analysis: LightCurveAnalysis;
	model: PhasedModel;
	periodogram: PeriodogramCurve;
}

/** A refusal naming the series by its position: `series[3].points[17].err`. */
export interface SeriesIssue {
	index: number | null;
	field: string;
	message: string;
}

export class BatchRefusedError extends Error {
	constructor(readonly issues: SeriesIssue[]) {
		super(
			issues
				.map((issue) => `${issue.index === null ? '' : `series[${issue.index}].`}${issue.field}: ${issue.message}`)
				.join('; ')
		);
		this.name = 'BatchRefusedError';
	}
}

export type ProgressReport = (done: number, total: number, next: BatchSeries | null) => Promise<void>;

function issuesOf(batch: readonly BatchSeries[]): SeriesIssue[] {
	const issues: SeriesIssue[] = [];
	batch.forEach((series, index) => {
		for (const issue of seriesIssues(series)) issues.push({ index, field: issue.field, message: issue.message });
	});
	const byStar = new Map<string, number[]>();
	batch.forEach((series, index) => byStar.set(series.id, [...(byStar.get(series.id) ?? []), index]));
	for (const indices of byStar.values()) {
		if (indices.length < 2) continue;
		try {
			commonTimeFrame(indices.map((index) => batch[index]));
		} catch (error) {
			if (!(error instanceof CalibrationInputError)) throw error;
			for (const issue of error.issues) {
				const index = indices.find(
					(i) => batch[i].id === issue.star && batch[i].timeReference !== batch[indices[0]].timeReference
				);
				issues.push({ index: index ?? indices[0], field: issue.field, message: issue.message });
			}
		}
	}
	return issues;
}

/** Refuses the batch if any series is unusable; otherwise nothing. */
export function checkBatch(batch: readonly BatchSeries[]): void {
	const issues = issuesOf(batch);
	if (issues.length > 0) throw new BatchRefusedError(issues);
}

const toSeriesIssues = (index: number, issues: readonly InputIssue[]): SeriesIssue[] =>
	issues.map((issue) => ({ index, field: issue.field, message: issue.message }));

export async function analyseBatch(
	batch: readonly BatchSeries[],
	options: BatchOptions,
	progress: ProgressReport = async () => undefined
): Promise<AnalysedSeries[]> {
	checkBatch(batch);
	const analysed: AnalysedSeries[] = [];
	for (const [index, series] of batch.entries()) {
		await progress(index, batch.length, series);
		try {
			const analysis = analyseLightCurve(series, {
				population: series.population,
				minPeriodDays: options.minPeriodDays,
				maxPeriodDays: options.maxPeriodDays,
				includePeriodogram: true
			});
			const { periodogram, ...rest } = analysis;
			analysed.push({
				series,
				analysis: rest,
				model: phasedModel(series, analysis),
				periodogram: thinPeriodogram(periodogram!)
			});
		} catch (error) {
			if (error instanceof CalibrationInputError) throw new BatchRefusedError(toSeriesIssues(index, error.issues));
			throw error;
		}
	}
	await progress(batch.length, batch.length, null);
	return analysed;
}

export { ENGINE_VERSION };
