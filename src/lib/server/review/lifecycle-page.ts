import type { EntityManager } from '@mikro-orm/postgresql';
import { User } from '../entities/index';
import { hasRole, isAdmin, standingInGroup, type Actor } from '../registry/actor';
import { findVersion, isEmbargoed, listVersions, visibleOrNull } from '../registry/versions';

/** A version's lifecycle and what the viewer may do to it: reviewers and admins deprecate, managers release. */
export async function lifecyclePage(em: EntityManager, actor: Actor, slug: string, number: number) {
	const { relation, version, lifecycle } = await findVersion(em, actor, slug, number);
	const { lifecycles, standings } = await listVersions(em, actor, slug);
	const people = [lifecycle.deprecatedBy?.id, lifecycle.releasedBy?.id].filter((id): id is string => !!id);
	const names = new Map(
		(people.length ? await em.find(User, { id: { $in: people } }, { fields: ['displayName'] }) : []).map((user) => [
			user.id,
			user.displayName
		])
	);
	const embargoed = isEmbargoed(lifecycle);
	const manager = isAdmin(actor) || (await standingInGroup(em, actor, relation.group.id)) === 'manager';
	const reviewerOrAdmin = hasRole(actor, 'reviewer') || isAdmin(actor);
	const deprecated = lifecycle.status === 'deprecated';
	return {
		relation: {
			slug: relation.slug,
			title: relation.title,
			group: relation.group.slug,
			visibility: relation.visibility
		},
		version: {
			number,
			ref: `${slug}@${number}`,
			digest: version.digest,
			status: standings.get(number)!,
			deprecatedAt: lifecycle.deprecatedAt?.toISOString() ?? null,
			deprecatedBy: lifecycle.deprecatedBy ? (names.get(lifecycle.deprecatedBy.id) ?? null) : null,
			deprecationReason: lifecycle.deprecationReason ?? null,
			successor: visibleOrNull(standings, lifecycle.successorNumber),
			embargoUntil: lifecycle.embargoUntil?.toISOString() ?? null,
			embargoed,
			releasedAt: lifecycle.releasedAt?.toISOString() ?? null,
			releasedBy: lifecycle.releasedBy ? (names.get(lifecycle.releasedBy.id) ?? null) : null
		},
		versions: lifecycles.map((other) => ({ number: other.number, status: standings.get(other.number)! })),
		successorChoices: lifecycles
			.filter((other) => other.number !== number && other.status !== 'deprecated')
			.map((other) => other.number)
			.sort((a, b) => b - a),
		may: {
			deprecate: reviewerOrAdmin && !deprecated,
			deprecateReason: deprecated
				? 'This version is deprecated already.'
				: reviewerOrAdmin
					? ''
					: 'Only reviewers and admins deprecate versions.',
			release: manager && embargoed,
			releaseReason: !embargoed
				? 'This version is not under embargo.'
				: manager
					? ''
					: `Only managers of ${relation.group.slug} (and admins) release its embargoed versions.`
		}
	};
}
