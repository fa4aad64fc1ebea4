import type { EntityManager } from '@mikro-orm/postgresql';
import type { LightCurveAnalysisValues, LightCurveFill, ValueSource } from '../../calibration/index';
import { CalibratorValueSource } from '../entities/calibrator-value-source.entity';
import type { CalibratorRevisionEntity } from '../entities/calibrator-revision.entity';
import { findUpload } from '../light-curves/uploads';
import { resultToWire, uploadToWire } from '../light-curves/wire';
import { findVisibleRevision } from './calibrator-set-reads';
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

/** For each revision of a set that took values from light curves: how many, and from how many uploads. */
export async function lightCurveValueCounts(em: EntityManager, calibratorSetId: string) {
	const rows = (await em.getConnection().execute(
		`select r.number, count(*)::int as value_count, count(distinct lc.upload_id)::int as upload_count
		from app_calibrator_value_source vs
		join app_calibrator_revision r on r.id = vs.revision_id
		join app_light_curve_result lc on lc.id = vs.light_curve_result_id
		where r.calibrator_set_id = ?
		group by r.number`,
		[calibratorSetId]
	)) as { number: number; value_count: number; upload_count: number }[];
	return new Map(rows.map((row) => [row.number, { values: row.value_count, uploads: row.upload_count }]));
}

/** Calibrator revisions that took values from an upload's analyses, newest first. */
export async function revisionsUsingUpload(em: EntityManager, uploadId: string) {
	return (await em.getConnection().execute(
		`select s.slug, r.number, count(*)::int as value_count
		from app_calibrator_value_source vs
		join app_light_curve_result lc on lc.id = vs.light_curve_result_id
		join app_calibrator_revision r on r.id = vs.revision_id
		join app_calibrator_set s on s.id = r.calibrator_set_id
		where lc.upload_id = ?
		group by s.slug, r.number, r.created_at
		order by r.created_at desc`,
		[uploadId]
	)) as { slug: string; number: number; value_count: number }[];
}

/** Sets whose revisions the person may upload (member of the owning group), for "use these values in…". */
export async function setsOpenToUploads(em: EntityManager, actor: Actor) {
	return (await em.getConnection().execute(
		`select s.slug, s.title
		from app_calibrator_set s
		where ? or exists (select 1 from app_group_membership m where m.group_id = s.group_id and m.user_id = ?)
		order by s.title
		limit 200`,
		[actor.roles.includes('admin'), actor.id]
	)) as { slug: string; title: string }[];
}

/** The analyses a visible revision took values from, each with the fields it gave and its upload's file. */
export async function revisionLightCurves(em: EntityManager, reader: Actor | null, slug: string, number: number) {
	const { set, revision } = await findVisibleRevision(em, reader, slug, number);
	const sources = await em.find(
		CalibratorValueSource,
		{ revision: revision.id },
		{ populate: ['lightCurveResult', 'lightCurveResult.upload'], orderBy: { star: 'asc', field: 'asc' } }
	);
	const byResult = new Map<string, { result: (typeof sources)[number]['lightCurveResult']; fields: string[] }>();
	for (const source of sources) {
		const result = source.lightCurveResult;
		const entry = byResult.get(result.id) ?? { result, fields: [] };
		entry.fields.push(source.field);
		byResult.set(result.id, entry);
	}
	return {
		calibrator_set: set.slug,
		revision: revision.number,
		digest: revision.digest,
		isPublic: set.visibility === 'public',
		analyses: [...byResult.values()].map(({ result, fields }) => {
			// Only the upload's file and time frame: who uploaded it and its other analyses stay private.
			const { id, source, time_reference, time_offset_days } = uploadToWire(result.upload, null, null);
			return { ...resultToWire(result), fields, upload: { id, source, time_reference, time_offset_days } };
		})
	};
}
