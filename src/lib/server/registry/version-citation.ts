import type { EntityManager } from '@mikro-orm/postgresql';
import type { RelationVersionContent } from '../../calibration/index';
import {
	citationBibtex,
	citationCslJson,
	citationDataCite,
	citationText,
	type CitationSource
} from '../../publishing/citation';
import { CalibratorSet } from '../entities/calibrator-set.entity';
import { Proposal } from '../entities/proposal.entity';
import type { Actor } from './actor';
import { findVersion } from './versions';

/** How to cite one frozen version, in each of the forms the API serves, with its media type. */
export const CITATION_STYLES = ['text', 'bibtex', 'csl-json', 'datacite'] as const;
export type CitationStyle = (typeof CITATION_STYLES)[number];

export const CITATION_MEDIA_TYPES: Record<CitationStyle, string> = {
	text: 'text/plain',
	bibtex: 'application/x-bibtex',
	'csl-json': 'application/vnd.citationstyles.csl+json',
	datacite: 'application/vnd.datacite.datacite+json'
};

/** The page a citation links readers to (the version page shows everything needed to reproduce it). */
export const versionPagePath = (slug: string, version: number) => `/relations/${slug}/versions/${version}`;

export async function citationSource(
	em: EntityManager,
	actor: Actor | null,
	slug: string,
	number: number,
	origin: string
): Promise<CitationSource> {
	const { relation, version } = await findVersion(em, actor, slug, number);
	const content = version.content as unknown as RelationVersionContent & { digest: string };
	const [proposal, set] = await Promise.all([
		version.proposalId ? em.findOne(Proposal, version.proposalId, { populate: ['author'] }) : null,
		em.findOne(CalibratorSet, { slug: content.calibrator_set.slug }, { fields: ['citations'] })
	]);
	return {
		slug,
		version: number,
		digest: version.digest,
		title: relation.title,
		url: `${origin}${versionPagePath(slug, number)}`,
		authors: proposal ? [{ name: proposal.author.displayName, orcid: proposal.author.orcid ?? null }] : [],
		approvedBy: content.approved_by.map((approver) => ({ name: approver.name, orcid: approver.orcid })),
		approvedAt: content.approved_at,
		requiredCitations: set ? [...set.citations] : []
	};
}

export function renderCitation(source: CitationSource, style: CitationStyle): string {
	switch (style) {
		case 'text':
			return `${citationText(source)}\n`;
		case 'bibtex':
			return citationBibtex(source);
		case 'csl-json':
			return JSON.stringify(citationCslJson(source));
		case 'datacite':
			return JSON.stringify(citationDataCite(source));
	}
}
