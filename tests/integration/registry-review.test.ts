import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { relationVersionDigest, verifyDigest, type RelationVersionContent } from '../../src/lib/calibration/index';
import { AuditEvent, Proposal, RelationVersion, VersionLifecycle } from '../../src/lib/server/entities/index';
import { startMailCatcher, type MailCatcher } from '../../src/lib/server/mail/capture-server';
import type { Actor } from '../../src/lib/server/registry/actor';
import { createCalibratorSet, uploadRevision } from '../../src/lib/server/registry/calibrator-sets';
import { RegistryError } from '../../src/lib/server/registry/errors';
import { requestFit } from '../../src/lib/server/registry/fits';
import {
	commentOnProposal,
	createProposal,
	editProposal,
	getProposal,
	listProposals,
	rebaseProposal,
	reviewProposal,
	submitProposal,
	withdrawProposal
} from '../../src/lib/server/registry/proposals';
import { createRelation, watchRelation } from '../../src/lib/server/registry/relations';
import { FitRequestSchema } from '../../src/lib/server/registry/schemas';
import { setSetting } from '../../src/lib/server/registry/settings';
import { deprecateVersion, findVersion, listVersions, releaseVersion } from '../../src/lib/server/registry/versions';
import { proposalToWire } from '../../src/lib/server/registry/wire';
import { openOwnerTestOrm, openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	HOST_FIT,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

let orm: MikroORM;
let store: TestObjectStore;
let mail: MailCatcher;
let groupSlug: string;
let curator: Actor & { email: string };
let reviewerA: Actor & { email: string };
let reviewerB: Actor & { email: string };
let curatorReviewer: Actor & { email: string };
let manager: Actor & { email: string };
let reader: Actor & { email: string };
let setSlug: string;

const em = () => orm.em.fork();

beforeAll(async () => {
	mail = await startMailCatcher();
	// Before any service reads the configuration: registry mail goes through this fake SMTP server.
	process.env.SMTP_URL = mail.url;
	orm = await openTestOrm();
	store = await startTestObjectStore();
	const group = await createGroup(orm, 'review');
	groupSlug = group.slug;
	const member = [{ groupId: group.id, standing: 'member' as const }];
	curator = await createActor(orm, 'curator', ['reader', 'curator'], member);
	reviewerA = await createActor(orm, 'reviewer-a', ['reader', 'reviewer'], member);
	reviewerB = await createActor(orm, 'reviewer-b', ['reader', 'reviewer'], member);
	curatorReviewer = await createActor(orm, 'both', ['reader', 'curator', 'reviewer'], member);
	manager = await createActor(orm, 'manager', ['reader'], [{ groupId: group.id, standing: 'manager' }]);
	reader = await createActor(orm, 'reader', ['reader']);
	setSlug = unique('review-set');
	await createCalibratorSet(em(), curator, {
		slug: setSlug,
		title: 'Invented host Cepheids',
		description: '',
		group: groupSlug,
		licence: 'CC0-1.0',
		citations: []
	});
	for (const seed of [7, 8]) {
		await uploadRevision(em(), store.storage, curator, setSlug, {
			bytes: new TextEncoder().encode(hostCalibratorCsv({ seed })),
			mediaType: 'text/csv',
			fileName: `host-${seed}.csv`,
			mapping: {},
			note: ''
		});
	}
});

afterAll(async () => {
	await store.close();
	await orm.close(true);
	await mail.close();
});

async function newRelation(options: { approvals?: number; visibility?: 'public' | 'group' } = {}) {
	const relation = await createRelation(em(), curator, {
		slug: unique('w-vi'),
		title: 'Invented W_VI relation',
		description: '',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchorType: 'geometric_host',
		group: groupSlug,
		visibility: options.visibility ?? 'public',
		requiredApprovals: options.approvals ?? 1,
		magnitudeSystem: null
	});
	return relation.slug;
}

async function fitFor(author: Actor, revision = 1, extra: Record<string, unknown> = {}) {
	const request = FitRequestSchema.parse({ calibrator_set: setSlug, revision, ...HOST_FIT, ...extra });
	const { job } = await requestFit(em(), author, request, null);
	expect(job.state).toBe('succeeded');
	return job.id;
}

async function submitted(relation: string, author: Actor = curator, rationale = 'Invented rationale.', revision = 1) {
	return createProposal(em(), author, relation, {
		fit: await fitFor(author, revision),
		title: unique('proposal'),
		rationale,
		embargoUntil: null,
		submit: true
	});
}

const refusalOf = async (work: Promise<unknown>) => {
	const error = await work.then(
		() => null,
		(e: unknown) => e
	);
	expect(error).toBeInstanceOf(RegistryError);
	return error as RegistryError;
};

describe('approvals and versions', () => {
	test('two proposals with the same base approved at the same moment: one version N+1, the other 409 stale-base', async () => {
		for (let round = 0; round < 3; round++) {
			const relation = await newRelation();
			const first = await submitted(relation);
			const second = await submitted(relation);
			// Separate EntityManagers, so the two approvals use separate connections and really overlap.
			const outcomes = await Promise.allSettled([
				reviewProposal(em(), reviewerA, first.id, 'approve', ''),
				reviewProposal(em(), reviewerB, second.id, 'approve', '')
			]);
			const fulfilled = outcomes.filter((outcome) => outcome.status === 'fulfilled');
			const rejected = outcomes.filter((outcome) => outcome.status === 'rejected');
			expect(fulfilled).toHaveLength(1);
			expect(rejected).toHaveLength(1);
			const refusal = (rejected[0] as PromiseRejectedResult).reason as RegistryError;
			expect(refusal).toMatchObject({ status: 409, code: 'stale-base' });
			expect(await em().count(RelationVersion, { relation: { slug: relation } })).toBe(1);
			const loserId = outcomes[0].status === 'rejected' ? first.id : second.id;
			const loser = await em().findOneOrFail(Proposal, loserId);
			expect(loser.state).toBe('in_review');
			expect(loser.approvals).toEqual([]);
			expect(loser.baseVersion).toBeNull();
		}
	});

	test('two reviewers approving one proposal at the same moment: both approvals count, no approval is lost', async () => {
		const relation = await newRelation({ approvals: 2 });
		const proposal = await submitted(relation);
		const outcomes = await Promise.all([
			reviewProposal(em(), reviewerA, proposal.id, 'approve', ''),
			reviewProposal(em(), reviewerB, proposal.id, 'approve', '')
		]);
		expect(outcomes.map((outcome) => outcome.versionNumber).sort()).toEqual([1, null]);
		const stored = await em().findOneOrFail(Proposal, proposal.id);
		expect(stored.state).toBe('approved');
		expect([...stored.approvals].sort()).toEqual([reviewerA.id, reviewerB.id].sort());
		const { version } = await findVersion(em(), reader, relation, 1);
		const content = version.content as unknown as RelationVersionContent;
		expect(content.approved_by.map((a) => a.name).sort()).toEqual(
			[reviewerA.displayName, reviewerB.displayName].sort()
		);
	});

	test('the loser rebases (approvals cleared, comparison against the new version) and becomes version 2', async () => {
		const relation = await newRelation();
		const first = await submitted(relation);
		const second = await submitted(relation, curator, 'Second rationale.', 2);
		await reviewProposal(em(), reviewerA, first.id, 'approve', '');
		expect((await refusalOf(reviewProposal(em(), reviewerB, second.id, 'approve', ''))).code).toBe('stale-base');
		expect((await getProposal(em(), reviewerB, second.id)).stale).toBe(true);
		await rebaseProposal(em(), curator, second.id);
		const view = await getProposal(em(), reviewerB, second.id);
		expect(view.proposal.baseVersion).toBe(1);
		expect(view.stale).toBe(false);
		expect(view.comparison.predictions.map((p) => p.logPeriod)).toEqual([0.5, 1, 1.5]);
		expect(view.calibrators?.changed.length).toBeGreaterThan(0);
		const outcome = await reviewProposal(em(), reviewerB, second.id, 'approve', '');
		expect(outcome.versionNumber).toBe(2);
		const { lifecycles } = await listVersions(em(), reader, relation);
		expect(lifecycles.map((l) => [l.number, l.status])).toEqual([
			[1, 'superseded'],
			[2, 'current']
		]);
	});

	test('a frozen version cannot be updated, deleted or truncated, even by the table owner', async () => {
		const relation = await newRelation();
		await reviewProposal(em(), reviewerA, (await submitted(relation)).id, 'approve', '');
		const ownerOrm = await openOwnerTestOrm();
		const connection = ownerOrm.em.getConnection();
		const [{ owner, me }] = await connection.execute(
			`select tableowner as owner, current_user as me from pg_tables where tablename = 'app_relation_version'`
		);
		expect(owner).toBe(me);
		const { version } = await findVersion(em(), reader, relation, 1);
		await expect(
			connection.execute(`update app_relation_version set content = '{}' where id = ?`, [version.id])
		).rejects.toThrow(/frozen: UPDATE is not allowed/);
		await expect(connection.execute(`delete from app_relation_version where id = ?`, [version.id])).rejects.toThrow(
			/frozen: DELETE is not allowed/
		);
		await expect(connection.execute(`truncate app_relation_version cascade`)).rejects.toThrow(
			/frozen: TRUNCATE is not allowed/
		);
		await ownerOrm.close(true);
		const again = await em().findOneOrFail(RelationVersion, version.id);
		expect(again.digest).toBe(version.digest);
		expect(verifyDigest(again.content).ok).toBe(true);
	});
});

describe('the workflow rules, with the database', () => {
	test('nobody approves their own proposal, even holding the reviewer role', async () => {
		const relation = await newRelation();
		const proposal = await submitted(relation, curatorReviewer);
		const refusal = await refusalOf(reviewProposal(em(), curatorReviewer, proposal.id, 'approve', ''));
		expect(refusal).toMatchObject({ status: 403, code: 'own-proposal' });
		expect((await em().findOneOrFail(Proposal, proposal.id)).state).toBe('in_review');
	});

	test('a reject closes a proposal even after approvals', async () => {
		const relation = await newRelation({ approvals: 2 });
		const proposal = await submitted(relation);
		await reviewProposal(em(), reviewerA, proposal.id, 'approve', '');
		expect((await em().findOneOrFail(Proposal, proposal.id)).approvals).toEqual([reviewerA.id]);
		await reviewProposal(em(), reviewerB, proposal.id, 'reject', 'The clipping hides a real trend.');
		const closed = await em().findOneOrFail(Proposal, proposal.id);
		expect(closed.state).toBe('rejected');
		expect(closed.decidedAt).toBeInstanceOf(Date);
		expect((await refusalOf(reviewProposal(em(), reviewerA, proposal.id, 'approve', ''))).code).toBe('decided');
		expect(await em().count(RelationVersion, { relation: { slug: relation } })).toBe(0);
	});

	test('request changes → the author edits (approvals cleared) → resubmits → approval; mail at each step', async () => {
		const relation = await newRelation({ approvals: 2 });
		const proposal = await submitted(relation);
		await mail.waitFor((m) => m.to.includes(reviewerA.email) && m.subject.startsWith('Review requested'));
		await reviewProposal(em(), reviewerA, proposal.id, 'approve', '');
		await reviewProposal(em(), reviewerB, proposal.id, 'request_changes', 'Explain the **clipping**.');
		const asked = await mail.waitFor((m) => m.to.includes(curator.email) && m.subject.includes('asked for changes'));
		expect(asked.text).toContain('Explain the **clipping**.');
		expect((await refusalOf(reviewProposal(em(), reviewerA, proposal.id, 'approve', ''))).code).toBe('wrong-state');
		await editProposal(em(), curator, proposal.id, { rationale: 'Clipped at 3σ because …' });
		const edited = await em().findOneOrFail(Proposal, proposal.id);
		expect(edited.state).toBe('changes_requested');
		expect(edited.approvals).toEqual([]);
		await commentOnProposal(em(), reviewerA, proposal.id, 'Thanks, reading it now.');
		await mail.waitFor((m) => m.to.includes(curator.email) && m.subject.includes('commented on'));
		await submitProposal(em(), curator, proposal.id);
		await reviewProposal(em(), reviewerA, proposal.id, 'approve', '');
		const final = await reviewProposal(em(), reviewerB, proposal.id, 'approve', '');
		expect(final.versionNumber).toBe(1);
		const view = await getProposal(em(), curator, proposal.id);
		expect(view.comments.map((c) => c.decision)).toEqual(['approve', 'request_changes', null, 'approve', 'approve']);
		const kinds = (await em().find(AuditEvent, { subject: proposal.id }, { orderBy: { id: 'asc' } })).map(
			(e) => e.kind
		);
		expect(kinds).toEqual([
			'proposal-created',
			'proposal-submitted',
			'proposal-approval-recorded',
			'proposal-changes-requested',
			'proposal-edited',
			'proposal-commented',
			'proposal-submitted',
			'proposal-approval-recorded',
			'proposal-approved'
		]);
	});

	test('edits only in draft and after changes were requested; the author withdraws from any open state', async () => {
		const relation = await newRelation();
		const proposal = await submitted(relation);
		expect((await refusalOf(editProposal(em(), curator, proposal.id, { title: 'New' }))).code).toBe('wrong-state');
		expect((await refusalOf(withdrawProposal(em(), reviewerA, proposal.id))).code).toBe('not-author');
		await withdrawProposal(em(), curator, proposal.id);
		expect((await em().findOneOrFail(Proposal, proposal.id)).state).toBe('withdrawn');
	});

	test('a Markdown rationale with script, event handlers and javascript: links renders inert', async () => {
		const relation = await newRelation();
		const hostile = [
			'Fine *text*.',
			'<script>alert(1)</script>',
			'<img src=x onerror="alert(2)">',
			'<a href="javascript:alert(3)">click</a>',
			'[also](javascript:alert(4))',
			'<p onclick="alert(5)">para</p>'
		].join('\n\n');
		const proposal = await submitted(relation, curator, hostile);
		const html = proposalToWire(await getProposal(em(), reviewerA, proposal.id)).rationale_html;
		expect(html).toContain('<em>text</em>');
		expect(html).not.toMatch(/<script|onerror|onclick|javascript:|<img/i);
	});

	test('drafts are the author’s own; awaiting=me lists what a reviewer may still approve', async () => {
		const relation = await newRelation();
		const draft = await createProposal(em(), curator, relation, {
			fit: await fitFor(curator),
			title: 'Draft',
			rationale: '',
			embargoUntil: null,
			submit: false
		});
		expect((await refusalOf(getProposal(em(), reviewerA, draft.id))).status).toBe(404);
		const open = await submitted(relation);
		const awaiting = await listProposals(em(), reviewerA, { relation, awaiting: 'me' });
		expect(awaiting.map((p) => p.id)).toEqual([open.id]);
		expect(await listProposals(em(), curator, { relation, awaiting: 'me' })).toEqual([]);
	});

	test('only curators propose, only their own finished fits, and only for a matching relation', async () => {
		const relation = await newRelation();
		const other = await fitFor(curator, 1, { method: 'ols' });
		const propose = (actor: Actor, slug: string) =>
			createProposal(em(), actor, slug, { fit: other, title: 'x', rationale: '', embargoUntil: null, submit: false });
		expect((await refusalOf(propose(reader, relation))).status).toBe(403);
		const notMine = await refusalOf(propose(curatorReviewer, relation));
		expect(notMine).toMatchObject({ status: 422, message: 'There is no such fit of yours.' });
		const overtone = await createRelation(em(), curator, {
			slug: unique('overtone'),
			title: 'Overtone',
			description: '',
			band: 'W_VI',
			population: 'classical_first_overtone',
			anchorType: 'geometric_host',
			group: groupSlug,
			visibility: 'public',
			requiredApprovals: null,
			magnitudeSystem: null
		});
		const refusal = await refusalOf(
			createProposal(em(), curator, overtone.slug, {
				fit: other,
				title: 'x',
				rationale: '',
				embargoUntil: null,
				submit: false
			})
		);
		expect(refusal.status).toBe(422);
		expect(refusal.errors[0].message).toMatch(/fits classical_fundamental/);
	});
});

describe('settings', () => {
	test('a relation that names no approvals count takes the site default, which an operator may change', async () => {
		const create = () =>
			createRelation(em(), curator, {
				slug: unique('defaulted'),
				title: 'Defaulted',
				description: '',
				band: 'W_VI',
				population: 'classical_fundamental',
				anchorType: 'geometric_host',
				group: groupSlug,
				visibility: 'public',
				requiredApprovals: null,
				magnitudeSystem: null
			});
		expect((await create()).requiredApprovals).toBe(1);
		await setSetting(em(), null, 'default_required_approvals', 2);
		try {
			expect((await create()).requiredApprovals).toBe(2);
		} finally {
			await setSetting(em(), null, 'default_required_approvals', 1);
		}
		expect(await em().count(AuditEvent, { kind: 'setting-changed', subject: 'default_required_approvals' })).toBe(2);
	});
});

describe('lifecycle, embargo, watchers', () => {
	test('deprecating the current version makes the previous one current again and mails watchers', async () => {
		const relation = await newRelation();
		await watchRelation(em(), reader, relation, true);
		await reviewProposal(em(), reviewerA, (await submitted(relation)).id, 'approve', '');
		await mail.waitFor((m) => m.to.includes(reader.email) && m.subject === `New version: ${relation}@1`);
		const fresh = await submitted(relation, curator, 'Third.', 2);
		await reviewProposal(em(), reviewerA, fresh.id, 'approve', '');
		await expect(deprecateVersion(em(), curator, relation, 2, { reason: 'x', successor: 1 })).rejects.toMatchObject({
			status: 403
		});
		const lifecycle = await deprecateVersion(em(), reviewerA, relation, 2, {
			reason: 'An invented zero-point error.',
			successor: 1
		});
		expect(lifecycle).toMatchObject({ status: 'deprecated', successorNumber: 1 });
		const statuses = await em().find(
			VersionLifecycle,
			{ relation: { slug: relation } },
			{ orderBy: { number: 'asc' } }
		);
		expect(statuses.map((l) => l.status)).toEqual(['current', 'deprecated']);
		const notice = await mail.waitFor((m) => m.to.includes(reader.email) && m.subject === `Deprecated: ${relation}@2`);
		expect(notice.text).toContain('An invented zero-point error.');
		expect(await em().count(RelationVersion, { relation: { slug: relation } })).toBe(2);
	});

	test('an embargoed version is seen only by its group until a manager releases it', async () => {
		const relation = await newRelation();
		const proposal = await createProposal(em(), curator, relation, {
			fit: await fitFor(curator),
			title: 'Embargoed',
			rationale: '',
			embargoUntil: new Date(Date.now() + 30 * 86_400_000),
			submit: true
		});
		await reviewProposal(em(), reviewerA, proposal.id, 'approve', '');
		expect((await refusalOf(findVersion(em(), reader, relation, 1))).status).toBe(404);
		expect((await findVersion(em(), reviewerA, relation, 1)).lifecycle.embargoUntil).toBeInstanceOf(Date);
		expect((await refusalOf(releaseVersion(em(), curator, relation, 1))).status).toBe(403);
		await releaseVersion(em(), manager, relation, 1);
		const { version } = await findVersion(em(), reader, relation, 1);
		expect(version.digest).toBe(relationVersionDigest(version.content as unknown as RelationVersionContent));
	});

	test('a group-private relation is invisible outside its group', async () => {
		const relation = await newRelation({ visibility: 'group' });
		expect((await refusalOf(getProposal(em(), reader, (await submitted(relation)).id))).status).toBe(404);
		expect((await refusalOf(listVersions(em(), reader, relation))).status).toBe(404);
	});
});
