import type { EntityManager } from '@mikro-orm/postgresql';
import { runRefit, toCalibratorRows, type RefitResult, type RelationVersionContent } from '../../calibration/index';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { revisionRows } from '../registry/calibrator-sets';
import { specFromFrozen } from '../registry/reproduce';

export type FrozenContent = RelationVersionContent & { digest: string };

/**
 * The calibrator revision a frozen version names, fitted again with the version's own spec, for the
 * PL diagram (which stars were used and which rejected). Without the bootstrap, which the diagram
 * does not need; reproducing a version (with it) is `reproduceVersion`.
 */
export async function refitFrozenVersion(em: EntityManager, content: FrozenContent): Promise<RefitResult> {
	const set = await em.findOneOrFail(CalibratorSet, { slug: content.calibrator_set.slug });
	const revision = await em.findOneOrFail(CalibratorRevision, {
		calibratorSet: set.id,
		number: content.calibrator_set.revision
	});
	return runRefit(toCalibratorRows(revisionRows(revision)), { ...specFromFrozen(content), bootstrap: null });
}
