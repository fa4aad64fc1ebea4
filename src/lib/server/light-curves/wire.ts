import type { LightCurveAnalysis, PhasedModel } from '../../calibration/index';
import type { AnalysisJobEntity } from '../entities/analysis-job.entity';
import type { LightCurveResultEntity } from '../entities/light-curve-result.entity';
import type { LightCurveUploadEntity } from '../entities/light-curve-upload.entity';

/** Light-curve analyses, uploads and jobs → the API's snake_case JSON; fields are whitelisted. */
const iso = (date: Date | null | undefined) => date?.toISOString() ?? null;
/** JSON has no NaN or Infinity (e.g. χ²/ν without degrees of freedom): those become null. */
const finite = (value: number | string | null | undefined) => {
	const number = Number(value);
	return value === null || value === undefined || !Number.isFinite(number) ? null : number;
};

interface WireWarning {
	code: string;
	message: string;
	star?: string;
	field?: string;
	details?: Record<string, number | string | null>;
}

function warningToWire(warning: WireWarning) {
	return {
		code: warning.code,
		message: warning.message,
		field: warning.field ?? null,
		details: Object.fromEntries(
			Object.entries(warning.details ?? {}).map(([key, value]) => [
				key.replace(/[A-Z]/g, (c) => `_${c.toLowerCase()}`),
				typeof value === 'number' ? finite(value) : value
			])
		)
	};
}

const aliasToWire = (alias: {
	kind: string;
	side: number;
	frequency: number;
	periodDays: number;
	powerRatio: number;
}) => ({
	kind: alias.kind,
	side: alias.side,
	frequency_per_day: alias.frequency,
	period_days: alias.periodDays,
	power_ratio: alias.powerRatio
});

const coverageToWire = (coverage: {
	coveredFraction: number;
	largestGap: number;
	largestGapStart: number;
	bins: number;
}) => ({
	covered_fraction: coverage.coveredFraction,
	largest_gap: coverage.largestGap,
	largest_gap_start: coverage.largestGapStart,
	bins: coverage.bins
});

const shapeToWire = (shape: Record<string, unknown>) => ({
	amplitudes: shape.amplitudes as number[],
	phases: shape.phases as number[],
	r21: finite(shape.r21 as number | null),
	r31: finite(shape.r31 as number | null),
	phi21: finite(shape.phi21 as number | null),
	phi31: finite(shape.phi31 as number | null)
});

/** One analysed series as the analyse endpoint answers it. */
export function analysisToWire(analysis: LightCurveAnalysis, model: PhasedModel, population: string) {
	return {
		id: analysis.id,
		band: analysis.band,
		population,
		time_frame: analysis.timeFrame,
		n_points: analysis.nPoints,
		baseline_days: analysis.baselineDays,
		period_days: analysis.periodDays,
		period_err_days: analysis.periodErrDays,
		frequency_per_day: analysis.frequency,
		peak_power: analysis.peakPower,
		false_alarm_probability: analysis.falseAlarmProbability,
		periodogram_method: analysis.periodogramMethod,
		amplitude: analysis.amplitude,
		epoch_of_maximum: analysis.epochOfMaximum,
		mean_mag_intensity: analysis.meanMagIntensity.value,
		mean_mag_intensity_err: analysis.meanMagIntensity.error,
		mean_mag_magnitude: analysis.meanMagMagnitude.value,
		mean_mag_magnitude_err: analysis.meanMagMagnitude.error,
		fourier_order: analysis.fourierOrder,
		fourier_coefficients: model.coefficients,
		fourier_shape: shapeToWire(analysis.fourier as unknown as Record<string, unknown>),
		reduced_chi_square: finite(analysis.reducedChiSquare),
		residual_rms: analysis.residualRms,
		phase_coverage: coverageToWire(analysis.phaseCoverage),
		aliases: analysis.aliases.map(aliasToWire),
		warnings: analysis.warnings.map(warningToWire)
	};
}

export type LightCurveResultWire = ReturnType<typeof analysisToWire>;

/** A stored per-star result, in the same shape as the analyse endpoint's, plus its id and engine version. */
export function resultToWire(row: LightCurveResultEntity) {
	return {
		analysis_id: row.id,
		id: row.star,
		band: row.band ?? null,
		population: row.population,
		time_frame: row.timeFrame,
		n_points: row.nPoints,
		baseline_days: Number(row.baselineDays),
		period_days: Number(row.periodDays),
		period_err_days: Number(row.periodErrDays),
		frequency_per_day: 1 / Number(row.periodDays),
		peak_power: Number(row.peakPower),
		false_alarm_probability: Number(row.falseAlarmProbability),
		periodogram_method: row.periodogramMethod,
		amplitude: Number(row.amplitude),
		epoch_of_maximum: Number(row.epochOfMaximum),
		mean_mag_intensity: Number(row.meanMagIntensity),
		mean_mag_intensity_err: Number(row.meanMagIntensityErr),
		mean_mag_magnitude: Number(row.meanMagMagnitude),
		mean_mag_magnitude_err: Number(row.meanMagMagnitudeErr),
		fourier_order: row.fourierOrder,
		fourier_coefficients: row.fourierCoefficients,
		fourier_shape: shapeToWire(row.fourierShape),
		reduced_chi_square: finite(row.reducedChiSquare),
		residual_rms: Number(row.residualRms),
		phase_coverage: row.phaseCoverage as unknown as ReturnType<typeof coverageToWire>,
		aliases: row.aliases as unknown as ReturnType<typeof aliasToWire>[],
		warnings: row.warnings as unknown as ReturnType<typeof warningToWire>[],
		engine_version: row.engineVersion,
		created_at: iso(row.createdAt)
	};
}

export function lightCurveJobToWire(job: AnalysisJobEntity) {
	return {
		id: job.id,
		kind: job.kind,
		state: job.state,
		progress: job.progress / 100,
		stage: job.stage,
		created_at: iso(job.createdAt),
		started_at: iso(job.startedAt),
		finished_at: iso(job.finishedAt),
		result: job.state === 'succeeded' ? (job.result ?? null) : null,
		error: job.error ?? null
	};
}

export function uploadToWire(
	upload: LightCurveUploadEntity,
	results: LightCurveResultEntity[] | null,
	job: AnalysisJobEntity | null
) {
	return {
		id: upload.id,
		uploaded_by: { id: upload.uploadedBy.id, display_name: upload.uploadedBy.displayName ?? null },
		created_at: iso(upload.createdAt),
		source: {
			sha256: upload.sourceSha256,
			name: upload.sourceName,
			media_type: upload.sourceMediaType,
			bytes: upload.sourceBytes
		},
		time_reference: upload.timeReference,
		time_offset_days: Number(upload.timeOffsetDays),
		population: upload.population,
		min_period_days: finite(upload.minPeriodDays),
		max_period_days: finite(upload.maxPeriodDays),
		star_count: upload.starCount,
		series: upload.series,
		job: job ? lightCurveJobToWire(job) : null,
		results: results ? results.map(resultToWire) : []
	};
}

export { warningToWire, aliasToWire, coverageToWire };
