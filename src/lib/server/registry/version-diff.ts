import type { EntityManager } from '@mikro-orm/postgresql';
import { diffCalibratorRevisions, type RelationVersionContent, type RevisionDiff } from '../../calibration/index';
import { compareRelations, type RelationComparison } from '../../review/comparison';
import { CalibratorRevision } from '../entities/calibrator-revision.entity';
import { Proposal } from '../entities/proposal.entity';
import type { RelationVersionEntity } from '../entities/relation-version.entity';
import type { Actor } from './actor';
import { canSeeCalibratorSet } from './calibrator-set-reads';
import { revisionRows } from './calibrator-sets';
import { RegistryError } from './errors';
import { findVisibleRelation } from './relations';
import { findVersion } from './versions';

/** Two versions of one relation compared the way a reviewer compares a proposal with its base. */
export interface VersionDiff {
	from: { ref: string; digest: string };
	to: { ref: string; digest: string };
	comparison: RelationComparison;
	calibrators: RevisionDiff | null;
}

/** A version the caller may see, or 422 naming the parameter (the same answer whether it exists or is hidden). */
async function versionFor(em: EntityManager, actor: Actor | null, slug: string, number: number, parameter: string) {
	try {
		return (await findVersion(em, actor, slug, number)).version;
	} catch (error) {
		if (error instanceof RegistryError && error.status === 404)
			throw new RegistryError(422, 'bad-query', `Bad query parameter: ${parameter}.`, [
				{ path: parameter, message: `${slug} has no version ${number}` }
			]);
		throw error;
	}
}

async function comparable(em: EntityManager, version: RelationVersionEntity) {
	const content = version.content as unknown as RelationVersionContent;
	const proposal = version.proposalId
		? await em.findOne(Proposal, version.proposalId, { fields: ['rationale'] })
		: null;
	return { ...content, rationale: proposal?.rationale ?? '' };
}

/** The revision a version was fitted from, when the caller may see its set (its rows are diffed). */
async function revisionOf(em: EntityManager, actor: Actor | null, content: RelationVersionContent) {
	const revision = await em.findOne(
		CalibratorRevision,
		{ calibratorSet: { slug: content.calibrator_set.slug }, number: content.calibrator_set.revision },
		{ populate: ['calibratorSet'] }
	);
	return revision && (await canSeeCalibratorSet(em, actor, revision.calibratorSet)) ? revision : null;
}

export async function diffVersions(
	em: EntityManager,
	actor: Actor | null,
	slug: string,
	from: number,
	to: number
): Promise<VersionDiff> {
	await findVisibleRelation(em, actor, slug);
	const a = await versionFor(em, actor, slug, from, 'from');
	const b = await versionFor(em, actor, slug, to, 'to');
	const [base, proposed] = [await comparable(em, a), await comparable(em, b)];
	const [baseRevision, proposedRevision] = [await revisionOf(em, actor, base), await revisionOf(em, actor, proposed)];
	return {
		from: { ref: base.ref, digest: a.digest },
		to: { ref: proposed.ref, digest: b.digest },
		comparison: compareRelations(base, proposed),
		calibrators:
			baseRevision && proposedRevision
				? diffCalibratorRevisions(revisionRows(baseRevision), revisionRows(proposedRevision))
				: null
	};
}
