import type { EntityManager } from '@mikro-orm/postgresql';
import { LockMode } from '@mikro-orm/core';
import {
	CalibrationInputError,
	diffCalibratorRevisions,
	sealRelationVersion,
	versionContentFromRefit,
	type RefitResult,
	type RelationVersionContent,
	type RevisionDiff
} from '../../calibration/index';
import { compareRelations, type RelationComparison } from '../../review/comparison';
import {
	availableCommands,
	decide,
	type ProposalCommand,
	type ProposalSnapshot,
	type RefusalCode
} from '../../review/proposal-workflow';
import { User } from '../entities/index';
import { AnalysisJob } from '../entities/analysis-job.entity';
import { CalibratorRevision, type CalibratorRevisionEntity } from '../entities/calibrator-revision.entity';
import { ProposalComment, type ReviewDecision } from '../entities/proposal-comment.entity';
import { Proposal, type ProposalEntity } from '../entities/proposal.entity';
import { Relation, type RelationEntity } from '../entities/relation.entity';
import { RelationVersion } from '../entities/relation-version.entity';
import { VersionLifecycle } from '../entities/version-lifecycle.entity';
import type { OutgoingMail } from '../mail/mailer';
import { belongsTo, hasRole, isAdmin, maySeePrivateOf, seesAllAsAdmin, type Actor } from './actor';
import { auditRegistry } from './audit';
import { canSeeCalibratorSet } from './calibrator-set-reads';
import { revisionRows } from './calibrator-sets';
import { conflict, forbidden, invalid, notFound, RegistryError } from './errors';
import { findFitJob, fitResultOf } from './fits';
import {
	decisionMail,
	deliver,
	inOwningGroup,
	mailWatchers,
	reviewersOf,
	submittedMail,
	versionMail
} from './notifications';
import { canSeeRelation, currentVersionNumber, findVisibleRelation } from './relations';
import { freezeVersion, isEmbargoed, latestVersionNumber } from './versions';

/**
 * Proposals and their review. Every command runs in one transaction that first locks the relation
 * row, then re-reads the proposal, so approvals of one relation are serialised: two proposals with
 * the same base can never both become version N+1, and no approval is lost to a concurrent one.
 */

const ENGINE_ANCHOR = { parallax: 'parallax', geometric_host: 'host', cluster: 'host' } as const;

function refusal(code: RefusalCode, reason: string): RegistryError {
	switch (code) {
		case 'not_author':
		case 'not_reviewer':
		case 'own_proposal':
			return new RegistryError(403, code.replace('_', '-'), reason);
		case 'stale_base':
			return conflict('stale-base', reason);
		default:
			return conflict(code.replace('_', '-'), reason);
	}
}

/** A finished fit the actor may propose for this relation, or a 422 saying why not. */
async function usableFit(em: EntityManager, actor: Actor, relation: RelationEntity, fitId: string) {
	const job = await em.findOne(AnalysisJob, { id: fitId, kind: 'fit' });
	if (!job || (job.requestedBy.id !== actor.id && !isAdmin(actor)))
		throw invalid('There is no such fit of yours.', [{ path: 'fit', message: 'unknown fit' }]);
	const result = fitResultOf(job);
	if (!result)
		throw invalid(`The fit has not succeeded (it is ${job.state}).`, [{ path: 'fit', message: 'not finished' }]);
	const problems: { path: string; message: string }[] = [];
	if (result.spec.bandId !== relation.band)
		problems.push({ path: 'fit', message: `fits band ${result.spec.bandId}, the relation is in ${relation.band}` });
	if (result.spec.population !== relation.population) {
		problems.push({
			path: 'fit',
			message: `fits ${result.spec.population}, the relation is for ${relation.population}`
		});
	}
	if (result.spec.anchor !== ENGINE_ANCHOR[relation.anchorType]) {
		problems.push({
			path: 'fit',
			message: `is anchored by ${result.spec.anchor}, the relation by ${relation.anchorType}`
		});
	}
	if (problems.length > 0) throw invalid('The fit does not fit this relation.', problems);
	const revisionId = (job.input as { calibratorRevisionId: string }).calibratorRevisionId;
	const revision = await em.findOneOrFail(CalibratorRevision, revisionId, { populate: ['calibratorSet'] });
	refuseHiddenRows(relation, revision.calibratorSet);
	return { job, result, revision };
}

/**
 * A version shows its calibrator rows (per-star points, reproduction, exports) to whoever may read it,
 * so its set must be visible to all of them: a public relation needs a public set, and a group-private
 * relation a public set or one of its own group's.
 */
function refuseHiddenRows(relation: RelationEntity, set: CalibratorRevisionEntity['calibratorSet']) {
	if (set.visibility === 'public') return;
	if (relation.visibility === 'public') {
		throw invalid(
			`The fit uses ${set.slug}, a calibrator set private to its group; versions of the public relation ${relation.slug} are public, so they must be built on a public set.`,
			[{ path: 'fit', message: `fits the group-private calibrator set ${set.slug}; the relation is public` }]
		);
	}
	if (set.group.id !== relation.group.id) {
		throw invalid(
			`The fit uses ${set.slug}, a calibrator set private to another group than the one owning ${relation.slug}.`,
			[{ path: 'fit', message: `fits ${set.slug}, private to another group` }]
		);
	}
}

function identityOf(revision: CalibratorRevisionEntity) {
	return { slug: revision.calibratorSet.slug, revision: revision.number, digest: revision.digest };
}

/** The content the proposal would freeze as `version`, approved by `approvedBy` at `approvedAt`. */
function contentFor(
	relation: RelationEntity,
	result: RefitResult,
	revision: CalibratorRevisionEntity,
	version: number,
	approvedBy: { name: string; orcid: string | null }[],
	approvedAt: string
): RelationVersionContent {
	try {
		return versionContentFromRefit(result, {
			slug: relation.slug,
			version,
			magnitudeSystem: relation.magnitudeSystem,
			calibratorSet: identityOf(revision),
			approvedBy,
			approvedAt
		});
	} catch (error) {
		if (error instanceof CalibrationInputError) {
			throw invalid(
				'The fit does not make a valid version.',
				error.issues.map((issue) => ({ path: issue.field, message: issue.message }))
			);
		}
		throw error;
	}
}

const utcSeconds = (date: Date) => date.toISOString().replace(/\.\d{3}Z$/, 'Z');

export interface CreateProposalInput {
	fit: string;
	title: string;
	rationale: string;
	embargoUntil: Date | null;
	submit: boolean;
}

export async function createProposal(
	em: EntityManager,
	actor: Actor,
	relationSlug: string,
	input: CreateProposalInput
) {
	const relation = await findVisibleRelation(em, actor, relationSlug);
	if (!hasRole(actor, 'curator')) throw forbidden('Only curators propose refits.');
	const { job, result, revision } = await usableFit(em, actor, relation, input.fit);
	// Building the content now refuses a fit that could never be frozen, before anyone reviews it.
	contentFor(relation, result, revision, 1, [{ name: 'pending', orcid: null }], utcSeconds(new Date()));
	await checkEmbargo(em, actor, relation, input.embargoUntil);
	const proposal = await em.transactional(async (tx) => {
		const proposal = tx.create(Proposal, {
			relation,
			author: actor.id,
			state: 'draft',
			title: input.title,
			rationale: input.rationale,
			baseVersion: await currentVersionNumber(tx, relation.id),
			fit: job,
			calibratorRevision: revision,
			approvals: [],
			embargoUntil: input.embargoUntil
		});
		await tx.flush();
		await auditRegistry(tx, 'proposal-created', actor, proposal.id, {
			relation: relation.slug,
			baseVersion: proposal.baseVersion,
			fit: job.id
		});
		return proposal;
	});
	if (input.submit) return (await runCommand(em, actor, proposal.id, 'submit', {})).proposal;
	return proposal;
}

async function checkEmbargo(
	em: EntityManager,
	actor: Actor,
	relation: RelationEntity,
	embargoUntil: Date | null | undefined
) {
	if (!embargoUntil) return;
	// An embargo keeps the version inside the owning group, so only someone inside it may ask for one.
	if (!(await belongsTo(em, actor, relation.group.id)))
		throw invalid(`Only members of ${relation.group.slug} may embargo versions of ${relation.slug}.`, [
			{ path: 'embargo_until', message: `you are not a member of ${relation.group.slug}` }
		]);
	if (relation.visibility !== 'public')
		throw invalid('Only versions of public relations can be embargoed.', [
			{ path: 'embargo_until', message: 'the relation is group-private already' }
		]);
	if (embargoUntil.getTime() <= Date.now())
		throw invalid('An embargo must end in the future.', [{ path: 'embargo_until', message: 'in the past' }]);
}

export interface EditInput {
	fit?: string;
	title?: string;
	rationale?: string;
	embargoUntil?: Date | null;
}

interface CommandOptions {
	edit?: EditInput;
	comment?: string;
	decision?: ReviewDecision;
}

export interface CommandOutcome {
	proposal: ProposalEntity;
	/** The version this command froze, if any. */
	versionNumber: number | null;
	frozen: { ref: string; version: number; digest: string } | null;
}

const COMMAND_AUDIT = {
	edit: 'proposal-edited',
	comment: 'proposal-commented',
	submit: 'proposal-submitted',
	request_changes: 'proposal-changes-requested',
	reject: 'proposal-rejected',
	withdraw: 'proposal-withdrawn',
	rebase: 'proposal-rebased'
} as const;

/** Applies one workflow command under the relation's lock; mail goes out after the commit. */
async function runCommand(
	em: EntityManager,
	actor: Actor,
	proposalId: string,
	command: ProposalCommand,
	options: CommandOptions
): Promise<CommandOutcome> {
	const mails: OutgoingMail[] = [];
	const outcome = await em.transactional(async (tx) => {
		const located = await tx.findOne(Proposal, proposalId, { fields: ['relation'] });
		if (!located) throw notFound(`proposal ${proposalId}`);
		const relation = await tx.findOneOrFail(Relation, located.relation.id, {
			lockMode: LockMode.PESSIMISTIC_WRITE,
			populate: ['group'],
			refresh: true
		});
		const proposal = await tx.findOneOrFail(Proposal, proposalId, { refresh: true, populate: ['author'] });
		if (!(await canSeeProposal(tx, actor, relation, proposal))) throw notFound(`proposal ${proposalId}`);
		const from = proposal.state;
		const currentVersion = await currentVersionNumber(tx, relation.id);
		const canReview = hasRole(actor, 'reviewer') && (await canSeeRelation(tx, actor, relation));
		const decision = decide(snapshotOf(proposal, relation, currentVersion), command, { id: actor.id, canReview });
		if (!decision.allowed) throw refusal(decision.code, decision.reason);

		if (command === 'edit' && options.edit) await applyEdit(tx, actor, relation, proposal, options.edit);
		if (command === 'rebase') proposal.baseVersion = currentVersion;
		if (command === 'submit') proposal.submittedAt = new Date();
		proposal.state = decision.next;
		proposal.approvals = decision.approvals;
		const decided = decision.next === 'approved' || decision.next === 'rejected' || decision.next === 'withdrawn';
		if (decided) proposal.decidedAt = new Date();

		const commentBody = options.comment ?? '';
		if (command === 'comment' || options.decision) {
			tx.create(ProposalComment, {
				proposal,
				author: actor.id,
				decision: options.decision ?? null,
				body: commentBody
			});
		}

		let versionNumber: number | null = null;
		let frozen: CommandOutcome['frozen'] = null;
		if (decision.freezesVersion !== null) {
			versionNumber = (await latestVersionNumber(tx, relation.id)) + 1;
			const approvers = await tx.find(User, { id: { $in: decision.approvals } });
			const byId = new Map(approvers.map((user) => [user.id, user]));
			const job = await tx.findOneOrFail(AnalysisJob, proposal.fit.id);
			const revision = await tx.findOneOrFail(CalibratorRevision, proposal.calibratorRevision.id, {
				populate: ['calibratorSet']
			});
			const content = sealRelationVersion(
				contentFor(
					relation,
					fitResultOf(job)!,
					revision,
					versionNumber,
					decision.approvals.map((id) => ({ name: byId.get(id)!.displayName, orcid: byId.get(id)!.orcid ?? null })),
					utcSeconds(new Date())
				)
			);
			proposal.versionNumber = versionNumber;
			await tx.flush();
			const version = await freezeVersion(tx, relation, content, proposal.id, proposal.embargoUntil ?? null);
			const lifecycle = await tx.findOneOrFail(VersionLifecycle, version.id);
			frozen = { ref: content.ref, version: versionNumber, digest: content.digest };
			await auditRegistry(tx, 'proposal-approved', actor, proposal.id, {
				relation: relation.slug,
				version: versionNumber,
				approvals: decision.approvals
			});
			await auditRegistry(tx, 'version-frozen', actor, content.ref, { digest: content.digest, proposal: proposal.id });
			mails.push(
				...(await mailWatchers(tx, relation, lifecycle, isEmbargoed(lifecycle), (to) =>
					versionMail(to, content.ref, content.digest, 'new')
				))
			);
		} else {
			const kind = command === 'approve' ? 'proposal-approval-recorded' : COMMAND_AUDIT[command];
			await auditRegistry(tx, kind, actor, proposal.id, {
				relation: relation.slug,
				from,
				to: decision.next,
				approvals: decision.approvals.length
			});
		}
		await tx.flush();
		mails.push(...(await mailsFor(tx, actor, relation, proposal, command, commentBody)));
		return { proposal, versionNumber, frozen };
	});
	await deliver(mails);
	return outcome;
}

async function mailsFor(
	em: EntityManager,
	actor: Actor,
	relation: RelationEntity,
	proposal: ProposalEntity,
	command: ProposalCommand,
	comment: string
): Promise<OutgoingMail[]> {
	const inGroup = await keptInGroup(em, relation, proposal);
	if (command === 'submit') {
		const reviewers = await reviewersOf(em, relation, proposal.author.id, inGroup);
		return reviewers.map((reviewer) => submittedMail(reviewer.email, relation.slug, proposal.title, proposal.id));
	}
	const verbs: Partial<Record<ProposalCommand, string>> = {
		comment: 'commented on',
		approve: proposal.state === 'approved' ? 'approved' : 'recorded an approval of',
		request_changes: 'asked for changes to',
		reject: 'rejected'
	};
	const verb = verbs[command];
	if (!verb || proposal.author.id === actor.id) return [];
	// An author who has left the group no longer hears of a proposal the group keeps to itself.
	if (inGroup && (await inOwningGroup(em, relation, [proposal.author])).length === 0) return [];
	return [decisionMail(proposal.author.email, relation.slug, proposal.title, actor.displayName, verb, comment)];
}

async function applyEdit(
	em: EntityManager,
	actor: Actor,
	relation: RelationEntity,
	proposal: ProposalEntity,
	edit: EditInput
) {
	if (edit.fit !== undefined) {
		const { job, revision } = await usableFit(em, actor, relation, edit.fit);
		proposal.fit = job;
		proposal.calibratorRevision = revision;
	}
	if (edit.title !== undefined) proposal.title = edit.title;
	if (edit.rationale !== undefined) proposal.rationale = edit.rationale;
	if (edit.embargoUntil !== undefined) {
		await checkEmbargo(em, actor, relation, edit.embargoUntil);
		proposal.embargoUntil = edit.embargoUntil;
	}
}

function snapshotOf(
	proposal: ProposalEntity,
	relation: RelationEntity,
	currentVersion: number | null
): ProposalSnapshot {
	return {
		state: proposal.state,
		authorId: proposal.author.id,
		approvals: [...proposal.approvals],
		requiredApprovals: relation.requiredApprovals,
		baseVersion: proposal.baseVersion ?? null,
		currentVersion
	};
}

/**
 * Whether the version a proposal produced or will produce is, for now, its group's alone: the relation
 * is group-private, the version is (or is to be) under embargo, or the base version it is compared
 * with is still under embargo (the comparison shows that version's coefficients).
 */
async function keptInGroup(em: EntityManager, relation: RelationEntity, proposal: ProposalEntity): Promise<boolean> {
	if (relation.visibility !== 'public') return true;
	const numbers = [proposal.versionNumber, proposal.baseVersion].filter((n): n is number => typeof n === 'number');
	const lifecycles = numbers.length
		? await em.find(VersionLifecycle, { relation: relation.id, number: { $in: numbers } })
		: [];
	if (lifecycles.some((lifecycle) => isEmbargoed(lifecycle))) return true;
	// Not yet frozen: its own embargo date holds it back.
	return !proposal.versionNumber && isEmbargoed({ embargoUntil: proposal.embargoUntil ?? null, releasedAt: null });
}

/**
 * Who may see a proposal, its comparison, its plots, its fit and mail about it: drafts only their author
 * (and admins); a proposal whose version is kept in the group only the group's members and admins
 * (eligible reviewers are members) — everyone else is told it does not exist; the rest whoever may see
 * the relation.
 */
async function canSeeProposal(
	em: EntityManager,
	actor: Actor | null,
	relation: RelationEntity,
	proposal: ProposalEntity
) {
	if (!(await canSeeRelation(em, actor, relation))) return false;
	if (proposal.state === 'draft' && !(actor && (proposal.author.id === actor.id || seesAllAsAdmin(actor))))
		return false;
	if (!(await keptInGroup(em, relation, proposal))) return true;
	return maySeePrivateOf(em, actor, relation.group.id);
}

export const editProposal = (em: EntityManager, actor: Actor, id: string, edit: EditInput) =>
	runCommand(em, actor, id, 'edit', { edit });
export const submitProposal = (em: EntityManager, actor: Actor, id: string) => runCommand(em, actor, id, 'submit', {});
export const withdrawProposal = (em: EntityManager, actor: Actor, id: string) =>
	runCommand(em, actor, id, 'withdraw', {});
export const rebaseProposal = (em: EntityManager, actor: Actor, id: string) => runCommand(em, actor, id, 'rebase', {});
export const commentOnProposal = (em: EntityManager, actor: Actor, id: string, body: string) =>
	runCommand(em, actor, id, 'comment', { comment: body });
export const reviewProposal = (
	em: EntityManager,
	actor: Actor,
	id: string,
	decision: ReviewDecision,
	comment: string
) => runCommand(em, actor, id, decision, { decision, comment });

export interface ProposalView {
	proposal: ProposalEntity;
	relation: RelationEntity;
	currentVersion: number | null;
	stale: boolean;
	comments: Awaited<ReturnType<typeof commentsOf>>;
	comparison: RelationComparison;
	calibrators: RevisionDiff | null;
	proposed: RelationVersionContent;
	fit: RefitResult;
	availableCommands: ProposalCommand[];
}

async function commentsOf(em: EntityManager, proposalId: string) {
	return em.find(ProposalComment, { proposal: proposalId }, { populate: ['author'], orderBy: { createdAt: 'asc' } });
}

/** A proposal with everything a reviewer looks at: its comparison with the base version. */
export async function getProposal(em: EntityManager, actor: Actor | null, id: string): Promise<ProposalView> {
	const proposal = await em.findOne(Proposal, id, { populate: ['author', 'relation', 'relation.group'] });
	if (!proposal || !(await canSeeProposal(em, actor, proposal.relation, proposal))) throw notFound(`proposal ${id}`);
	const relation = proposal.relation;
	const [job, revision, currentVersion, comments] = await Promise.all([
		em.findOneOrFail(AnalysisJob, proposal.fit.id),
		em.findOneOrFail(CalibratorRevision, proposal.calibratorRevision.id, { populate: ['calibratorSet'] }),
		currentVersionNumber(em, relation.id),
		commentsOf(em, proposal.id)
	]);
	const fit = fitResultOf(job)!;
	const proposed = contentFor(
		relation,
		fit,
		revision,
		(proposal.baseVersion ?? 0) + 1,
		[{ name: 'pending', orcid: null }],
		utcSeconds(proposal.updatedAt)
	);
	let base: (RelationVersionContent & { rationale: string }) | null = null;
	let calibrators: RevisionDiff | null = null;
	if (proposal.baseVersion !== null && proposal.baseVersion !== undefined) {
		const version = await em.findOneOrFail(RelationVersion, { relation, number: proposal.baseVersion });
		const content = version.content as unknown as RelationVersionContent;
		const baseProposal = version.proposalId ? await em.findOne(Proposal, version.proposalId) : null;
		base = { ...content, rationale: baseProposal?.rationale ?? '' };
		const baseRevision = await em.findOne(
			CalibratorRevision,
			{ calibratorSet: { slug: content.calibrator_set.slug }, number: content.calibrator_set.revision },
			{ populate: ['calibratorSet'] }
		);
		// Rows of a set the reader may not see are never diffed for them.
		if (baseRevision && (await canSeeCalibratorSet(em, actor, baseRevision.calibratorSet))) {
			calibrators = diffCalibratorRevisions(revisionRows(baseRevision), revisionRows(revision));
		}
	}
	const canReview = !!actor && hasRole(actor, 'reviewer');
	return {
		proposal,
		relation,
		currentVersion,
		stale: (proposal.baseVersion ?? null) !== currentVersion,
		comments,
		comparison: compareRelations(base, { ...proposed, rationale: proposal.rationale }),
		calibrators,
		proposed,
		fit,
		availableCommands: actor
			? availableCommands(snapshotOf(proposal, relation, currentVersion), { id: actor.id, canReview })
			: []
	};
}

export interface ProposalFilter {
	relation?: string;
	state?: ProposalEntity['state'];
	awaiting?: 'me';
}

/** Proposals the actor may see; `awaiting: 'me'` keeps those in review that the actor may still approve. */
export async function listProposals(em: EntityManager, actor: Actor, filter: ProposalFilter) {
	const where: Record<string, unknown> = {};
	if (filter.relation) where.relation = { slug: filter.relation };
	if (filter.state) where.state = filter.state;
	if (filter.awaiting) where.state = 'in_review';
	const proposals = await em.find(Proposal, where, {
		populate: ['author', 'relation', 'relation.group'],
		orderBy: { updatedAt: 'desc' },
		limit: 500
	});
	const visible: ProposalEntity[] = [];
	for (const proposal of proposals) {
		if (!(await canSeeProposal(em, actor, proposal.relation, proposal))) continue;
		if (filter.awaiting) {
			if (!hasRole(actor, 'reviewer') || proposal.author.id === actor.id || proposal.approvals.includes(actor.id))
				continue;
		}
		visible.push(proposal);
	}
	return visible;
}

/**
 * A fit job as `findFitJob` finds it, hidden as well when it backs a proposal the actor may not see
 * (an embargoed proposal's fit shows the coefficients of the version it will become).
 */
export async function findVisibleFitJob(em: EntityManager, actor: Actor, id: string) {
	const job = await findFitJob(em, actor, id);
	const backing = await em.find(Proposal, { fit: job.id }, { populate: ['author', 'relation', 'relation.group'] });
	for (const proposal of backing) {
		if (!(await canSeeProposal(em, actor, proposal.relation, proposal))) throw notFound(`job ${id}`);
	}
	return job;
}
