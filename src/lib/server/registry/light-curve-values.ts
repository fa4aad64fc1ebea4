import type { EntityManager } from '@mikro-orm/postgresql';
import type { LightCurveAnalysisValues, LightCurveFill, ValueSource } from '../../calibration/index';
import { CalibratorValueSource } from '../entities/calibrator-value-source.entity';
import type { CalibratorRevisionEntity } from '../entities/calibrator-revision.entity';
import { findUpload } from '../light-curves/uploads';
import type { Actor } from './actor';
import { RegistryError } from './errors';

/** A revision upload's request to take values from one of the uploader's light-curve uploads. */
export interface LightCurveValuesRequest {
	upload: string;
	fill: LightCurveFill;
}

/**
 * The finished analyses of a light-curve upload, as the calibrator-table core takes them. Only the
 * uploader (or an admin) may use an upload: anyone else gets the same 404 as for an upload that does
 * not exist. An upload still being analysed, or whose analysis failed, gives 409.
 */
export async function finishedAnalyses(
	em: EntityManager,
	actor: Actor,
	uploadId: string
): Promise<LightCurveAnalysisValues[]> {
	const { upload, job, results } = await findUpload(em, actor, uploadId);
	const state = job?.state ?? 'queued';
	if (state !== 'succeeded') {
		const detail =
			state === 'failed'
				? `its analysis failed (${job?.error ?? 'no reason recorded'}); upload the light curves again`
				: `it is still being analysed (${state}, ${job?.progress ?? 0}%); try again when it has finished`;
		throw new RegistryError(
			409,
			'light-curves-not-ready',
			`Light-curve upload ${upload.id} cannot be used yet: ${detail}.`
		);
	}
	return results.map((result) => ({
		result: result.id,
		upload: upload.id,
		sourceDigest: `sha256:${upload.sourceSha256}`,
		engineVersion: result.engineVersion,
		star: result.star,
		band: result.band ?? null,
		population: result.population,
		periodDays: Number(result.periodDays),
		periodErrDays: Number(result.periodErrDays),
		meanMagIntensity: Number(result.meanMagIntensity),
		meanMagIntensityErr: Number(result.meanMagIntensityErr),
		warnings: (result.warnings as { code?: unknown }[]).map((warning) => String(warning.code ?? 'warning'))
	}));
}

/** Writes the database's record of a new revision's value sources (inside the revision's transaction). */
export function recordValueSources(em: EntityManager, revision: CalibratorRevisionEntity, sources: ValueSource[]) {
	for (const source of sources) {
		em.create(CalibratorValueSource, {
			revision,
			star: source.star,
			field: source.field,
			value: source.value,
			lightCurveResult: source.light_curve.result,
			quantity: source.light_curve.quantity
		});
	}
}
