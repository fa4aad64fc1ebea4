import type { EntityManager } from '@mikro-orm/postgresql';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { RelationVersion } from '../entities/relation-version.entity';
import type { Actor } from './actor';
import { canSeeCalibratorSet } from './calibrator-set-reads';
import { notFound } from './errors';
import { pinHref } from './read-wire';
import { findVersion } from './versions';

/** What a content digest names: a frozen relation version or a calibrator revision. */
export interface DigestTarget {
	kind: 'relation_version' | 'calibrator_revision';
	ref: string;
	href: string;
	digest: string;
}

export const calibratorRevisionHref = (slug: string, revision: number) =>
	`/api/v1/calibrator-sets/${slug}/revisions/${revision}`;

/**
 * Relation versions first (their digests are unique); a version the caller may not see answers 404
 * like an unknown digest, and so does a revision of a set private to a group the caller is not in.
 */
export async function findByDigest(em: EntityManager, actor: Actor | null, digest: string): Promise<DigestTarget> {
	const version = await em.findOne(
		RelationVersion,
		{ digest },
		{ populate: ['relation'], fields: ['number', 'relation.slug'] }
	);
	if (version) {
		const slug = version.relation.slug;
		// findVersion applies the visibility and embargo rules, and throws the same 404 otherwise.
		await findVersion(em, actor, slug, version.number).catch(() => {
			throw notFound(`object with digest ${digest}`);
		});
		return { kind: 'relation_version', ref: `${slug}@${version.number}`, href: pinHref(slug, version.number), digest };
	}
	const revision = await em.findOne(
		CalibratorRevision,
		{ digest },
		{ populate: ['calibratorSet', 'calibratorSet.group'], orderBy: { createdAt: 'asc' }, exclude: ['content'] }
	);
	if (revision && (await canSeeCalibratorSet(em, actor, revision.calibratorSet))) {
		const slug = revision.calibratorSet.slug;
		return {
			kind: 'calibrator_revision',
			ref: `${slug}@${revision.number}`,
			href: calibratorRevisionHref(slug, revision.number),
			digest
		};
	}
	throw notFound(`object with digest ${digest}`);
}
