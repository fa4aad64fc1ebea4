import { renderMarkdown } from '../text/markdown';
import type { CatalogueRow, RelationDetail, VersionSummary } from './relation-catalogue';
import type { StarAppearance } from './star-search';

/** The read API's snake_case JSON for catalogue rows and version summaries; fields are whitelisted. */
const iso = (date: Date | null) => date?.toISOString() ?? null;

export const pinHref = (slug: string, version: number) => `/api/v1/pins/${slug}@${version}`;

export function catalogueRowToWire(row: CatalogueRow) {
	return {
		slug: row.slug,
		title: row.title,
		band: row.band,
		population: row.population,
		magnitude_system: row.magnitudeSystem,
		anchor_type: row.anchorType,
		group: row.group,
		visibility: row.visibility,
		state: row.state,
		current: row.current
			? { version: row.current.version, ref: `${row.slug}@${row.current.version}`, digest: row.current.digest }
			: null,
		version_count: row.versionCount,
		updated_at: row.updatedAt.toISOString()
	};
}

export function versionSummaryToWire(slug: string, version: VersionSummary) {
	return {
		ref: `${slug}@${version.number}`,
		version: version.number,
		lifecycle: version.lifecycle,
		digest: version.digest,
		approved_at: version.approvedAt,
		deprecated_at: iso(version.deprecatedAt),
		deprecation_reason: version.deprecationReason,
		successor: version.successor === null ? null : `${slug}@${version.successor}`,
		embargo_until: iso(version.embargoUntil),
		embargoed: version.embargoed,
		href: pinHref(slug, version.number)
	};
}

export function relationDetailToWire({ relation, versions }: RelationDetail) {
	return {
		...catalogueRowToWire(relation),
		description: relation.description,
		description_html: renderMarkdown(relation.description),
		versions: versions.map((version) => versionSummaryToWire(relation.slug, version))
	};
}

export function starAppearanceToWire(item: StarAppearance) {
	return {
		star: item.star,
		cross_id: item.crossId,
		calibrator_set: item.calibratorSet,
		revision: item.revision,
		digest: item.digest,
		href: item.href,
		relation_versions: item.versions.map((use) => ({
			ref: `${use.relation}@${use.version}`,
			relation: use.relation,
			version: use.version,
			digest: use.digest,
			href: use.href,
			usage: use.usage,
			reason: use.reason,
			detail: use.detail,
			standardized_residual: use.standardizedResidual
		}))
	};
}
