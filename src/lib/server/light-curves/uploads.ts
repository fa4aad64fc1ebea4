import { LockMode, type EntityManager } from '@mikro-orm/postgresql';
import {
	isPopulation,
	LIGHT_CURVE_FIELDS,
	LIGHT_CURVE_MEDIA_TYPES,
	parseLightCurveUpload,
	type LightCurveColumnMapping,
	type LightCurveMediaType,
	type LightCurveUploadLimits,
	type PopulationId,
	type TableIssue
} from '../../calibration/index';
import { AnalysisJob } from '../entities/analysis-job.entity';
import { LightCurveResult } from '../entities/light-curve-result.entity';
import { LightCurveUpload, type LightCurveUploadEntity } from '../entities/light-curve-upload.entity';
import { User } from '../entities/user.entity';
import { seesAllAsAdmin, type Actor } from '../registry/actor';
import { notFound, RegistryError } from '../registry/errors';
import { issuesToFieldErrors } from '../registry/upload-checks';
import { contentAddress, type ObjectStorage } from '../storage/object-storage';
import type { BatchSeries } from './analysis';
import type { LightCurveJobInput, LightCurveQueue } from './jobs';

/**
 * Light-curve uploads: a CSV or TSV file is checked completely, then its original bytes are stored by
 * content address and the upload row and its analysis job are written in one transaction; the job is
 * queued after commit. Nothing is half-written: a refused file leaves no row (and no object).
 */
export const SOURCE_PREFIX = 'light-curves';

export interface LightCurveUploadInput {
	bytes: Uint8Array;
	mediaType: string;
	fileName: string;
	timeReference: string | null;
	timeOffsetDays: string | null;
	mapping: LightCurveColumnMapping;
	star: string | null;
	band: string | null;
	population: PopulationId;
	minPeriodDays?: number;
	maxPeriodDays?: number;
}

export const DEFAULT_UPLOAD_LIMITS: LightCurveUploadLimits = {
	maxBytes: 8 * 1024 * 1024,
	maxRows: 200_000,
	maxCellLength: 100,
	maxSeries: 500
};

export function refuseLightCurveTable(issues: TableIssue[]): never {
	throw new RegistryError(
		422,
		'invalid-light-curves',
		`The light curves were not stored: ${issues.length} problem${issues.length === 1 ? '' : 's'} (nothing was saved).`,
		issuesToFieldErrors(issues),
		{ issues }
	);
}

/** Reads a column-mapping query value: `{"HJD": "time", "I": "magnitude", "sigma": "error", "notes": null}`. */
export function parseColumnMapping(raw: string | null): LightCurveColumnMapping {
	if (!raw) return {};
	let value: unknown;
	try {
		value = JSON.parse(raw);
	} catch {
		throw new RegistryError(400, 'bad-mapping', 'The mapping query parameter is not valid JSON.');
	}
	if (typeof value !== 'object' || value === null || Array.isArray(value)) {
		throw new RegistryError(422, 'bad-mapping', 'The mapping must be an object of column name → field.');
	}
	const errors = Object.entries(value)
		.filter(([, field]) => field !== null && !(LIGHT_CURVE_FIELDS as readonly unknown[]).includes(field))
		.map(([column]) => ({
			path: `mapping/${column}`,
			message: `must be one of ${LIGHT_CURVE_FIELDS.join(', ')} or null`
		}));
	if (errors.length > 0) throw new RegistryError(422, 'bad-mapping', 'The mapping names unknown fields.', errors);
	return value as LightCurveColumnMapping;
}

function mediaTypeOf(raw: string): LightCurveMediaType {
	const mediaType = raw.split(';')[0].trim().toLowerCase();
	if (!(LIGHT_CURVE_MEDIA_TYPES as readonly string[]).includes(mediaType)) {
		throw new RegistryError(
			415,
			'unsupported-media-type',
			'Send the light curves as text/csv or text/tab-separated-values.'
		);
	}
	return mediaType as LightCurveMediaType;
}

export async function uploadLightCurves(
	em: EntityManager,
	storage: ObjectStorage,
	actor: Actor,
	input: LightCurveUploadInput,
	queue: LightCurveQueue,
	limits: LightCurveUploadLimits = DEFAULT_UPLOAD_LIMITS
): Promise<LightCurveUploadEntity> {
	const mediaType = mediaTypeOf(input.mediaType);
	if (input.bytes.byteLength > limits.maxBytes) {
		throw new RegistryError(413, 'too-large', `The file is larger than ${limits.maxBytes} bytes.`);
	}
	if (
		input.minPeriodDays !== undefined &&
		input.maxPeriodDays !== undefined &&
		input.maxPeriodDays <= input.minPeriodDays
	) {
		throw new RegistryError(422, 'validation-failed', 'max_period_days must be greater than min_period_days.', [
			{ path: 'max_period_days', message: 'must be greater than min_period_days' }
		]);
	}
	const parsed = parseLightCurveUpload(
		input.bytes,
		{
			mediaType,
			timeReference: input.timeReference,
			timeOffsetDays: input.timeOffsetDays,
			mapping: input.mapping,
			star: input.star,
			band: input.band
		},
		limits
	);
	if (parsed.issues.length > 0) refuseLightCurveTable(parsed.issues);

	const address = contentAddress(SOURCE_PREFIX, input.bytes);
	const existedBefore = await storage.exists(address.key);
	let stored = false;
	let jobId = '';
	try {
		const upload = await em.transactional(async (tx) => {
			// The uploader's row is locked so their uploads are written one at a time.
			await tx.findOneOrFail(User, actor.id, { lockMode: LockMode.PESSIMISTIC_WRITE, fields: ['id'] });
			const uploadId = crypto.randomUUID();
			const job = tx.create(AnalysisJob, {
				kind: 'light_curves',
				requestedBy: actor.id,
				input: { source: 'upload', upload_id: uploadId } satisfies LightCurveJobInput,
				state: 'queued',
				progress: 0,
				stage: `queued: ${parsed.series.length} series`
			});
			const upload = tx.create(LightCurveUpload, {
				id: uploadId,
				uploadedBy: actor.id,
				sourceSha256: address.sha256,
				sourceKey: address.key,
				sourceName: input.fileName.slice(0, 200),
				sourceMediaType: mediaType,
				sourceBytes: input.bytes.byteLength,
				timeReference: parsed.timeReference!,
				timeOffsetDays: parsed.timeOffsetDays!,
				columnMapping: input.mapping,
				fileStar: parsed.columns.some((column) => column.field === 'star') ? null : input.star?.trim() || null,
				fileBand: input.band?.trim() || null,
				population: input.population,
				minPeriodDays: input.minPeriodDays ?? null,
				maxPeriodDays: input.maxPeriodDays ?? null,
				series: parsed.series.map((series) => ({
					star: series.id,
					band: series.band ?? null,
					points: series.points.length
				})),
				starCount: new Set(parsed.series.map((series) => series.id)).size,
				analysisJob: job
			});
			await tx.flush();
			jobId = job.id;
			// Last step before commit: a failed put rolls the rows back.
			await storage.putAt(address, input.bytes, mediaType);
			stored = true;
			return upload;
		});
		const queueJobId = await queue.enqueueLightCurves(jobId);
		await em.nativeUpdate(AnalysisJob, { id: jobId }, { queueJobId });
		return upload;
	} catch (error) {
		if (stored && !existedBefore) await storage.delete(address.key).catch(() => undefined);
		throw error;
	}
}

/** The series of a stored upload, read again from its original bytes exactly as at upload. */
export function seriesOfUpload(upload: LightCurveUploadEntity, bytes: Uint8Array): BatchSeries[] {
	const parsed = parseLightCurveUpload(
		bytes,
		{
			mediaType: upload.sourceMediaType as LightCurveMediaType,
			timeReference: upload.timeReference,
			timeOffsetDays: Number(upload.timeOffsetDays),
			mapping: upload.columnMapping as LightCurveColumnMapping,
			star: upload.fileStar,
			band: upload.fileBand
		},
		{ ...DEFAULT_UPLOAD_LIMITS, maxBytes: Math.max(DEFAULT_UPLOAD_LIMITS.maxBytes, bytes.byteLength) }
	);
	if (parsed.issues.length > 0) refuseLightCurveTable(parsed.issues);
	const population = isPopulation(upload.population) ? upload.population : 'classical_fundamental';
	return parsed.series.map((series) => ({ ...series, population }));
}

/** An upload of the caller (any upload for an admin), with its job and results; 404 otherwise. */
export async function findUpload(em: EntityManager, actor: Actor, id: string) {
	const upload = await em.findOne(LightCurveUpload, seesAllAsAdmin(actor) ? { id } : { id, uploadedBy: actor.id }, {
		populate: ['uploadedBy', 'analysisJob']
	});
	if (!upload) throw notFound(`light-curve upload ${id}`);
	const results = await em.find(LightCurveResult, { upload: upload.id }, { orderBy: { position: 'asc' } });
	return { upload, job: upload.analysisJob ?? null, results };
}

export async function listUploads(em: EntityManager, actor: Actor, limit = 100) {
	const uploads = await em.find(
		LightCurveUpload,
		{ uploadedBy: actor.id },
		{ orderBy: { createdAt: 'desc' }, limit, populate: ['analysisJob'] }
	);
	return uploads.map((upload) => ({
		id: upload.id,
		created_at: upload.createdAt.toISOString(),
		source_name: upload.sourceName,
		star_count: upload.starCount,
		series_count: upload.series.length,
		state: upload.analysisJob?.state ?? 'queued',
		progress: (upload.analysisJob?.progress ?? 0) / 100
	}));
}
