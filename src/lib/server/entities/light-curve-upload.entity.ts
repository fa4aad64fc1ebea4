import { defineEntity, type InferEntity } from '@mikro-orm/core';
import { AnalysisJob } from './analysis-job.entity';
import { User } from './user.entity';

export const LIGHT_CURVE_TIME_REFERENCES = ['HJD', 'BJD_TDB', 'JD', 'MJD'] as const;

/**
 * One uploaded light-curve file: who sent it and when, the original bytes' content address in object
 * storage, how its times are stamped, and the star-and-band series it holds. Its analyses are
 * LightCurveResult rows, written together once the analysis job has finished every series.
 */
export const LightCurveUpload = defineEntity({
	name: 'LightCurveUpload',
	tableName: 'app_light_curve_upload',
	properties: (p) => ({
		id: p
			.uuid()
			.primary()
			.onCreate(() => crypto.randomUUID()),
		uploadedBy: p.manyToOne(User).deleteRule('restrict').index(),
		/** Lowercase hex sha256 of the stored original file. */
		sourceSha256: p.string().length(64),
		sourceKey: p.string().length(300),
		sourceName: p.string().length(200),
		sourceMediaType: p.string().length(100),
		sourceBytes: p.integer(),
		timeReference: p.enum([...LIGHT_CURVE_TIME_REFERENCES]),
		timeOffsetDays: p.double().runtimeType('number'),
		/** Column mapping used to read the file (source column → field). */
		columnMapping: p.json<Record<string, string | null>>(),
		/** The file's own star id when it has no star column; null otherwise. */
		fileStar: p.string().length(100).nullable(),
		fileBand: p.string().length(20).nullable(),
		/** Population the stars are taken to belong to (sets the warnings). */
		population: p.string().length(40),
		minPeriodDays: p.double().runtimeType('number').nullable(),
		maxPeriodDays: p.double().runtimeType('number').nullable(),
		/** [{ star, band, points }] in file order. */
		series: p.json<{ star: string; band: string | null; points: number }[]>(),
		starCount: p.integer(),
		analysisJob: p.manyToOne(AnalysisJob).deleteRule('restrict').nullable(),
		createdAt: p.datetime().onCreate(() => new Date())
	})
});

export type LightCurveUploadEntity = InferEntity<typeof LightCurveUpload>;
