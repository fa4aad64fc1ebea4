import type { EntityManager } from '@mikro-orm/postgresql';
import type { CitationSource } from '../../publishing/citation';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { Proposal } from '../entities/proposal.entity';
import { RelationVersion } from '../entities/relation-version.entity';
import { RelationWatch } from '../entities/relation-watch.entity';
import { hasRole, isAdmin, standingInGroup, type Actor } from '../registry/actor';
import { notFound } from '../registry/errors';
import { findVersion, isEmbargoed, listVersions, visibleOrNull } from '../registry/versions';
import { refitFrozenVersion, type FrozenContent } from './refit-version';

/**
 * Everything a relation page or a version page shows, for one viewer: the relation, its visible
 * versions with their lifecycle, the chosen version's frozen content, the calibrator points of its
 * PL diagram, how to cite it, and what the viewer may do.
 */
export interface DiagramPoint {
	star: string;
	logPeriod: number;
	absMag: number;
	absMagErr: number;
	residual: number;
	used: boolean;
}

export interface TimelineEntry {
	version: number;
	ref: string;
	digest: string;
	status: 'current' | 'superseded' | 'deprecated';
	approvedAt: string;
	deprecationReason: string | null;
	successor: number | null;
	embargoUntil: string | null;
	embargoed: boolean;
}

const iso = (date: Date | null | undefined) => date?.toISOString() ?? null;

async function diagramPoints(em: EntityManager, content: FrozenContent): Promise<DiagramPoint[]> {
	// The bootstrap changes only the intervals, not which stars are used: leave it out here.
	const result = await refitFrozenVersion(em, content);
	return result.residuals
		.filter((residual) => residual.absMag !== null && residual.absMagErr !== null && residual.residual !== null)
		.map((residual) => ({
			star: residual.star,
			logPeriod: residual.logPeriod,
			absMag: residual.absMag!,
			absMagErr: residual.absMagErr!,
			residual: residual.residual!,
			used: residual.used
		}));
}

async function citationFor(
	em: EntityManager,
	slug: string,
	title: string,
	content: FrozenContent,
	proposalId: string | null,
	origin: string
): Promise<CitationSource> {
	const [proposal, set] = await Promise.all([
		proposalId ? em.findOne(Proposal, proposalId, { populate: ['author'] }) : null,
		em.findOne(CalibratorSet, { slug: content.calibrator_set.slug })
	]);
	return {
		slug,
		version: content.version,
		digest: content.digest,
		title,
		url: `${origin}/relations/${slug}/versions/${content.version}`,
		authors: proposal ? [{ name: proposal.author.displayName, orcid: proposal.author.orcid ?? null }] : [],
		approvedBy: content.approved_by,
		approvedAt: content.approved_at,
		requiredCitations: set ? [...set.citations] : []
	};
}

export async function loadRelationView(
	em: EntityManager,
	actor: Actor | null,
	slug: string,
	requested: number | null,
	origin: string
) {
	const { relation, lifecycles, standings } = await listVersions(em, actor, slug);
	const versions = await em.find(
		RelationVersion,
		{ relation, number: { $in: lifecycles.map((lifecycle) => lifecycle.number) } },
		{ orderBy: { number: 'asc' } }
	);
	const byNumber = new Map(versions.map((version) => [version.number, version]));
	const timeline: TimelineEntry[] = lifecycles.map((lifecycle) => {
		const version = byNumber.get(lifecycle.number)!;
		return {
			version: lifecycle.number,
			ref: `${slug}@${lifecycle.number}`,
			digest: version.digest,
			status: standings.get(lifecycle.number)!,
			approvedAt: String((version.content as { approved_at?: string }).approved_at ?? iso(version.createdAt)),
			deprecationReason: lifecycle.deprecationReason ?? null,
			successor: visibleOrNull(standings, lifecycle.successorNumber),
			embargoUntil: iso(lifecycle.embargoUntil),
			embargoed: isEmbargoed(lifecycle)
		};
	});
	const current = timeline.find((entry) => entry.status === 'current') ?? null;
	const chosenNumber = requested ?? current?.version ?? timeline.at(-1)?.version ?? null;
	let selected = null;
	if (chosenNumber !== null) {
		const { version, lifecycle } = await findVersion(em, actor, slug, chosenNumber);
		const content = { ...(version.content as unknown as FrozenContent), digest: version.digest };
		const [points, citation] = await Promise.all([
			diagramPoints(em, content).catch(() => null),
			citationFor(em, slug, relation.title, content, version.proposalId ?? null, origin)
		]);
		const manager = actor
			? isAdmin(actor) || (await standingInGroup(em, actor, relation.group.id)) === 'manager'
			: false;
		selected = {
			content,
			entry: timeline.find((entry) => entry.version === chosenNumber)!,
			points,
			citation,
			mayDeprecate: !!actor && (hasRole(actor, 'reviewer') || isAdmin(actor)) && lifecycle.status !== 'deprecated',
			mayRelease: manager && isEmbargoed(lifecycle)
		};
	} else if (requested !== null) {
		throw notFound(`version ${requested} of ${slug}`);
	}
	const watching = actor ? (await em.count(RelationWatch, { relation, user: actor.id })) > 0 : false;
	return {
		relation: {
			slug: relation.slug,
			title: relation.title,
			description: relation.description,
			band: relation.band,
			population: relation.population,
			magnitudeSystem: relation.magnitudeSystem,
			anchorType: relation.anchorType,
			group: relation.group.slug,
			visibility: relation.visibility
		},
		timeline,
		current,
		selected,
		watching
	};
}

export type RelationView = Awaited<ReturnType<typeof loadRelationView>>;
