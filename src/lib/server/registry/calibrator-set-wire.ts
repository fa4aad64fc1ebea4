import { REVISION_FORMATS } from '../../publishing/revision-export';
import type { CalibratorRevisionEntity } from '../entities/calibrator-revision.entity';
import type { CalibratorSetSummary } from './calibrator-set-reads';
import { calibratorSetToWire, revisionToWire } from './wire';

/** Calibrator-set reads → snake_case JSON, built on the registry's own set and revision mappers. */
const exportLinks = (slug: string, number: number) =>
	Object.fromEntries(
		REVISION_FORMATS.map((format) => [format, `/api/v1/calibrator-sets/${slug}/revisions/${number}?format=${format}`])
	) as Record<(typeof REVISION_FORMATS)[number], string>;

export function calibratorSetSummaryToWire({ set, revisionCount, latest }: CalibratorSetSummary) {
	return {
		...calibratorSetToWire(set),
		revision_count: revisionCount,
		latest: latest ? { revision: latest.number, digest: latest.digest } : null
	};
}

export function revisionEntryToWire(slug: string, revision: Omit<CalibratorRevisionEntity, 'content'>) {
	return {
		...revisionToWire(slug, revision),
		created_by: { id: revision.uploadedBy.id, display_name: revision.uploadedBy.displayName ?? null },
		exports: exportLinks(slug, revision.number)
	};
}

export function calibratorSetDetailToWire(
	set: CalibratorSetSummary['set'],
	revisions: Omit<CalibratorRevisionEntity, 'content'>[]
) {
	const last = revisions.at(-1);
	return {
		...calibratorSetSummaryToWire({
			set,
			revisionCount: revisions.length,
			latest: last ? { number: last.number, digest: last.digest } : null
		}),
		revisions: revisions.map((revision) => revisionEntryToWire(set.slug, revision))
	};
}
