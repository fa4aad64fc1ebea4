import type { EntityManager } from '@mikro-orm/postgresql';
import type { Feed, FeedEntry } from '../../publishing/atom';
import type { Actor } from './actor';
import { relationDetail } from './relation-catalogue';
import { versionPagePath } from './version-citation';

/** A relation's Atom feed: one entry per new version and one per deprecation, as the viewer may see them. */
export async function relationFeed(
	em: EntityManager,
	actor: Actor | null,
	slug: string,
	origin: string
): Promise<Feed> {
	const { relation, versions } = await relationDetail(em, actor, slug);
	const page = `${origin}/relations/${slug}`;
	const entries: FeedEntry[] = versions.flatMap((version) => {
		const ref = `${slug}@${version.number}`;
		const link = `${origin}${versionPagePath(slug, version.number)}`;
		const approved: FeedEntry = {
			id: `${link}#approved`,
			title: `New version: ${ref}`,
			updated: version.approvedAt,
			link,
			summary: `${relation.title}, version ${version.number} (${ref}) was approved; digest ${version.digest}.`
		};
		if (!version.deprecatedAt) return [approved];
		const successor = version.successor === null ? '' : ` Use ${slug}@${version.successor} instead.`;
		return [
			approved,
			{
				id: `${link}#deprecated`,
				title: `Deprecated: ${ref}`,
				updated: version.deprecatedAt.toISOString(),
				link,
				summary: `${ref} was deprecated: ${version.deprecationReason ?? 'no reason given'}.${successor}`
			}
		];
	});
	return {
		id: page,
		title: `${relation.title} (${slug}) — Candlebook`,
		selfLink: `${page}/feed.atom`,
		alternateLink: page,
		entries,
		fallbackUpdated: relation.updatedAt.toISOString()
	};
}
