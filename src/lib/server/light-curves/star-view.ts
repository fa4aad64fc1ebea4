import type { EntityManager } from '@mikro-orm/postgresql';
import { modelCurve, phasePoints } from '../../calibration/index';
import type { Actor } from '../registry/actor';
import { notFound } from '../registry/errors';
import type { ObjectStorage } from '../storage/object-storage';
import { findUpload, seriesOfUpload } from './uploads';
import { resultToWire } from './wire';

/**
 * What the star page draws for each band of one star: the stored result, its thinned periodogram, the
 * points folded on the period (read again from the stored original file) and the Fourier model.
 */
export async function starView(
	em: EntityManager,
	storage: ObjectStorage,
	actor: Actor,
	uploadId: string,
	star: string
) {
	const { upload, job, results } = await findUpload(em, actor, uploadId);
	const mine = results.filter((row) => row.star === star);
	if (!upload.series.some((series) => series.star === star)) throw notFound(`star ${star} in this upload`);
	const series = mine.length > 0 ? seriesOfUpload(upload, await storage.get(upload.sourceKey)) : [];
	return {
		upload: {
			id: upload.id,
			sourceName: upload.sourceName,
			timeReference: upload.timeReference,
			timeOffsetDays: Number(upload.timeOffsetDays)
		},
		jobState: job?.state ?? 'queued',
		star,
		bands: mine.map((row) => {
			const wire = resultToWire(row);
			const points = series.find((entry) => entry.id === row.star && (entry.band ?? null) === (row.band ?? null));
			const model = {
				periodDays: wire.period_days,
				epochOfMaximum: wire.epoch_of_maximum,
				order: wire.fourier_order,
				coefficients: wire.fourier_coefficients
			};
			return {
				result: wire,
				periodogram: row.periodogram,
				folded: points ? phasePoints(points, model) : [],
				model: modelCurve(model, 200)
			};
		})
	};
}

export type StarView = Awaited<ReturnType<typeof starView>>;
