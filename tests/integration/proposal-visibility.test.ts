import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { CalibratorRevision, CalibratorSet, VersionLifecycle } from '../../src/lib/server/entities/index';
import { startMailCatcher, type MailCatcher } from '../../src/lib/server/mail/capture-server';
import type { Actor } from '../../src/lib/server/registry/actor';
import { canSeeCalibratorSet } from '../../src/lib/server/registry/calibrator-set-reads';
import {
	createCalibratorSet,
	findCalibratorSet,
	setCalibratorSetVisibility,
	uploadRevision
} from '../../src/lib/server/registry/calibrator-sets';
import { findByDigest } from '../../src/lib/server/registry/digest-lookup';
import { RegistryError } from '../../src/lib/server/registry/errors';
import { findFitJob, requestFit } from '../../src/lib/server/registry/fits';
import { deliverHeldMail } from '../../src/lib/server/registry/notifications';
import {
	createProposal,
	findVisibleFitJob,
	getProposal,
	listProposals,
	reviewProposal
} from '../../src/lib/server/registry/proposals';
import { listRelations } from '../../src/lib/server/registry/relation-catalogue';
import { createRelation, watchRelation } from '../../src/lib/server/registry/relations';
import { FitRequestSchema } from '../../src/lib/server/registry/schemas';
import { findStar } from '../../src/lib/server/registry/star-search';
import { findVersion, listVersions, releaseVersion } from '../../src/lib/server/registry/versions';
import { reviewQueue } from '../../src/lib/server/review/review-queue';
import { openTestOrm } from '../support/database';
import {
	createActor,
	createGroup,
	HOST_FIT,
	hostCalibratorCsv,
	startTestObjectStore,
	unique,
	type TestObjectStore
} from '../support/registry';

/**
 * What a reader may not see stays unseen: a proposal whose version is (or will be) under embargo, its
 * comparison, fit and mail are its group's alone; a group-private calibrator set never reaches a public
 * relation; and an API token without read:private sees what an anonymous caller sees.
 */

type Person = Actor & { email: string };

let orm: MikroORM;
let store: TestObjectStore;
let mail: MailCatcher;
let group: { id: string; slug: string };
let otherGroup: { id: string; slug: string };
let author: Person;
let member: Person;
let groupReviewer: Person;
let manager: Person;
let admin: Person;
let outsideReader: Person;
let outsideCurator: Person;
let outsideReviewer: Person;
let otherGroupMember: Person;
let publicSet: string;
let privateSet: string;
/** Star names only the private set has. */
const HIDDEN_STAR_PREFIX = 'Hidden';

const em = () => orm.em.fork();
/** The same person acting through an API token without read:private. */
const scopeless = (person: Person): Actor => ({ ...person, readsPrivate: false });
const started = performance.now();

beforeAll(async () => {
	mail = await startMailCatcher();
	// Before any service reads the configuration: registry mail goes through this fake SMTP server.
	process.env.SMTP_URL = mail.url;
	orm = await openTestOrm();
	store = await startTestObjectStore();
	group = await createGroup(orm, 'owning');
	otherGroup = await createGroup(orm, 'other');
	const inGroup = [{ groupId: group.id, standing: 'member' as const }];
	author = await createActor(
		orm,
		'author',
		['reader', 'curator'],
		[...inGroup, { groupId: otherGroup.id, standing: 'member' }]
	);
	member = await createActor(orm, 'member', ['reader'], inGroup);
	groupReviewer = await createActor(orm, 'group-reviewer', ['reader', 'reviewer'], inGroup);
	manager = await createActor(orm, 'manager', ['reader'], [{ groupId: group.id, standing: 'manager' }]);
	admin = await createActor(orm, 'admin', ['reader', 'admin']);
	outsideReader = await createActor(orm, 'outside-reader', ['reader']);
	outsideCurator = await createActor(orm, 'outside-curator', ['reader', 'curator']);
	outsideReviewer = await createActor(orm, 'outside-reviewer', ['reader', 'reviewer']);
	otherGroupMember = await createActor(
		orm,
		'other-member',
		['reader', 'curator'],
		[{ groupId: otherGroup.id, standing: 'member' }]
	);
	publicSet = await newSet('public', hostCalibratorCsv({ seed: 7 }));
	privateSet = await newSet('group', hostCalibratorCsv({ seed: 9 }).replaceAll('Invented ', `${HIDDEN_STAR_PREFIX} `));
});

afterAll(async () => {
	await store.close();
	await orm.close(true);
	await mail.close();
	console.log(`proposal-visibility.test.ts: ${Math.round(performance.now() - started)} ms`);
});

async function newSet(visibility: 'public' | 'group', csv: string) {
	const slug = unique(`vis-${visibility}-set`);
	await createCalibratorSet(em(), author, {
		slug,
		title: `Invented host Cepheids (${visibility})`,
		description: '',
		group: group.slug,
		licence: 'CC0-1.0',
		citations: [],
		visibility
	});
	await uploadRevision(em(), store.storage, author, slug, {
		bytes: new TextEncoder().encode(csv),
		mediaType: 'text/csv',
		fileName: 'host.csv',
		mapping: {},
		note: ''
	});
	return slug;
}

async function newRelation(options: { visibility?: 'public' | 'group'; group?: string } = {}) {
	const relation = await createRelation(em(), author, {
		slug: unique('vis-w-vi'),
		title: 'Invented W_VI relation',
		description: '',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchorType: 'geometric_host',
		group: options.group ?? group.slug,
		visibility: options.visibility ?? 'public',
		requiredApprovals: 1,
		magnitudeSystem: null
	});
	return relation.slug;
}

async function fitOf(set: string, by: Actor = author) {
	const request = FitRequestSchema.parse({ calibrator_set: set, revision: 1, ...HOST_FIT });
	const { job } = await requestFit(em(), by, request, null);
	expect(job.state).toBe('succeeded');
	return job.id;
}

const DAY = 86_400_000;

async function embargoedProposal(relation: string, options: { approve: boolean }) {
	const fit = await fitOf(publicSet);
	const proposal = await createProposal(em(), author, relation, {
		fit,
		title: unique('embargoed'),
		rationale: 'Invented: the group keeps this to itself for now.',
		embargoUntil: new Date(Date.now() + 30 * DAY),
		submit: true
	});
	if (options.approve) await reviewProposal(em(), groupReviewer, proposal.id, 'approve', '');
	return { id: proposal.id, fit };
}

const statusOf = async (work: Promise<unknown>) =>
	work.then(
		() => 200,
		(error: unknown) => {
			if (error instanceof RegistryError) return error.status;
			throw error;
		}
	);

const outsiders = () => ({
	'signed-in reader outside the group': outsideReader,
	'curator outside the group': outsideCurator,
	'reviewer outside the group': outsideReviewer,
	'member of another group': otherGroupMember,
	'member through a token without read:private': scopeless(member),
	'admin through a token without read:private': scopeless(admin)
});
const insiders = () => ({
	'group member': member,
	'eligible reviewer': groupReviewer,
	admin: admin,
	author: author
});

describe('embargo through proposals', () => {
	test('an approved proposal whose version is under embargo is 404 and unlisted outside its group, until release', async () => {
		const relation = await newRelation();
		const { id, fit } = await embargoedProposal(relation, { approve: true });
		expect((await findVersion(em(), member, relation, 1)).lifecycle.embargoUntil).toBeInstanceOf(Date);

		for (const [who, actor] of Object.entries(outsiders())) {
			expect(await statusOf(getProposal(em(), actor, id)), who).toBe(404);
			const approved = await listProposals(em(), actor, { state: 'approved' });
			expect(
				approved.map((p) => p.id),
				who
			).not.toContain(id);
			expect(await statusOf(findVersion(em(), actor, relation, 1)), who).toBe(404);
		}
		for (const [who, actor] of Object.entries(insiders())) {
			const view = await getProposal(em(), actor, id);
			expect(view.proposed.coefficients.zero_point, who).toBeTypeOf('number');
			expect(
				(await listProposals(em(), actor, { state: 'approved' })).map((p) => p.id),
				who
			).toContain(id);
		}
		// The fit behind it: the author sees it in a session, not through a token without read:private.
		expect((await findVisibleFitJob(em(), author, fit)).id).toBe(fit);
		expect(await statusOf(findVisibleFitJob(em(), scopeless(author), fit))).toBe(404);
		expect(await statusOf(findVisibleFitJob(em(), scopeless(admin), fit))).toBe(404);

		await releaseVersion(em(), manager, relation, 1);
		for (const [who, actor] of Object.entries(outsiders())) {
			expect((await getProposal(em(), actor, id)).proposal.id, who).toBe(id);
		}
	});

	test('a proposal in review with an embargo is reviewed inside its group: outsiders get 404, counts leave it out', async () => {
		const relation = await newRelation();
		const { id } = await embargoedProposal(relation, { approve: false });
		const queue = await reviewQueue(em(), outsideReviewer, { view: 'all', group: null, state: null });
		expect(queue.items.map((item) => item.id)).not.toContain(id);
		const waiting = await reviewQueue(em(), outsideReviewer, { view: 'waiting', group: null, state: null });
		expect(waiting.items.map((item) => item.id)).not.toContain(id);
		expect(waiting.counts.waiting).toBe(waiting.items.length);
		expect(await statusOf(reviewProposal(em(), outsideReviewer, id, 'approve', ''))).toBe(404);

		const inside = await reviewQueue(em(), groupReviewer, { view: 'waiting', group: null, state: null });
		expect(inside.items.map((item) => item.id)).toContain(id);
		await reviewProposal(em(), groupReviewer, id, 'approve', '');
	});

	test('a proposal compared with a base version under embargo stays in the group while that embargo holds', async () => {
		const relation = await newRelation();
		await embargoedProposal(relation, { approve: true });
		const next = await createProposal(em(), author, relation, {
			fit: await fitOf(publicSet),
			title: unique('after-embargo'),
			rationale: '',
			embargoUntil: null,
			submit: true
		});
		expect(next.baseVersion).toBe(1);
		expect(await statusOf(getProposal(em(), outsideReader, next.id))).toBe(404);
		expect((await getProposal(em(), member, next.id)).comparison).toBeTruthy();
	});

	test('only members of the owning group may embargo a version (422 naming embargo_until)', async () => {
		const relation = await newRelation();
		const refusal = await createProposal(em(), outsideCurator, relation, {
			fit: await fitOf(publicSet, outsideCurator),
			title: 'x',
			rationale: '',
			embargoUntil: new Date(Date.now() + 30 * DAY),
			submit: false
		}).catch((error: RegistryError) => error);
		expect(refusal).toBeInstanceOf(RegistryError);
		expect(refusal).toMatchObject({ status: 422 });
		expect((refusal as RegistryError).errors.map((e) => e.path)).toEqual(['embargo_until']);
	});
});

describe('mail about embargoed proposals', () => {
	const noMailFor = async (email: string, subject: string) => {
		// Mail goes out after the commit, in order; give the fake server a moment to take the last one.
		await new Promise((resolve) => setTimeout(resolve, 300));
		expect(mail.messages.filter((m) => m.to.includes(email) && m.subject.includes(subject))).toEqual([]);
	};

	test('reviewers outside the group hear nothing; watchers outside hear of the version when a manager releases it', async () => {
		const relation = await newRelation();
		const insideWatcher = await createActor(
			orm,
			'inside-watcher',
			['reader'],
			[{ groupId: group.id, standing: 'member' }]
		);
		const outsideWatcher = await createActor(orm, 'outside-watcher', ['reader']);
		await watchRelation(em(), insideWatcher, relation, true);
		await watchRelation(em(), outsideWatcher, relation, true);

		const { id } = await embargoedProposal(relation, { approve: false });
		const title = (await getProposal(em(), member, id)).proposal.title;
		await mail.waitFor((m) => m.to.includes(groupReviewer.email) && m.subject.includes(title));
		await noMailFor(outsideReviewer.email, title);

		await reviewProposal(em(), groupReviewer, id, 'approve', '');
		const subject = `New version: ${relation}@1`;
		await mail.waitFor((m) => m.to.includes(insideWatcher.email) && m.subject === subject);
		await noMailFor(outsideWatcher.email, subject);
		// Nothing due while the embargo holds.
		expect(await deliverHeldMail(em())).toBe(0);
		await noMailFor(outsideWatcher.email, subject);

		await releaseVersion(em(), manager, relation, 1);
		const released = await mail.waitFor((m) => m.to.includes(outsideWatcher.email) && m.subject === subject);
		expect(released.text).toContain(`${relation}@1`);
		// Sent once only.
		expect(await deliverHeldMail(em())).toBe(0);
		await new Promise((resolve) => setTimeout(resolve, 300));
		expect(mail.messages.filter((m) => m.to.includes(outsideWatcher.email) && m.subject === subject)).toHaveLength(1);
	});

	test('held mail goes out once the embargo date has passed, only to those still watching', async () => {
		const relation = await newRelation();
		const staying = await createActor(orm, 'staying-watcher', ['reader']);
		const leaving = await createActor(orm, 'leaving-watcher', ['reader']);
		await watchRelation(em(), staying, relation, true);
		await watchRelation(em(), leaving, relation, true);
		await embargoedProposal(relation, { approve: true });
		await watchRelation(em(), leaving, relation, false);
		const subject = `New version: ${relation}@1`;
		await noMailFor(staying.email, subject);

		// The date passes: the lifecycle is the mutable side of the version, so moving its date is allowed.
		await em().nativeUpdate(
			VersionLifecycle,
			{ relation: { slug: relation }, number: 1 },
			{ embargoUntil: new Date(Date.now() - 1000) }
		);
		expect(await findVersion(em(), outsideReader, relation, 1)).toBeTruthy();
		expect(await deliverHeldMail(em())).toBeGreaterThanOrEqual(1);
		await mail.waitFor((m) => m.to.includes(staying.email) && m.subject === subject);
		await noMailFor(leaving.email, subject);
	});
});

describe('private calibrator sets inside public relations', () => {
	test('a fit of a group-private set cannot be proposed for a public relation (422 naming fit)', async () => {
		const relation = await newRelation();
		const refusal = await createProposal(em(), author, relation, {
			fit: await fitOf(privateSet),
			title: 'Private rows in public',
			rationale: '',
			embargoUntil: null,
			submit: false
		}).catch((error: unknown) => error);
		expect(refusal).toBeInstanceOf(RegistryError);
		expect(refusal).toMatchObject({ status: 422 });
		expect((refusal as RegistryError).errors).toEqual([
			{ path: 'fit', message: expect.stringContaining(`group-private calibrator set ${privateSet}`) }
		]);
		// Not even under embargo: the version would become public when it ends.
		const embargoed = await createProposal(em(), author, relation, {
			fit: await fitOf(privateSet),
			title: 'Private rows, embargoed',
			rationale: '',
			embargoUntil: new Date(Date.now() + 30 * DAY),
			submit: false
		}).catch((error: unknown) => error);
		expect(embargoed).toMatchObject({ status: 422 });
	});

	test("a group-private relation may use its own group's private set, not another group's", async () => {
		const own = await newRelation({ visibility: 'group' });
		const accepted = await createProposal(em(), author, own, {
			fit: await fitOf(privateSet),
			title: 'Private in private',
			rationale: '',
			embargoUntil: null,
			submit: false
		});
		expect(accepted.state).toBe('draft');
		const foreign = await newRelation({ visibility: 'group', group: otherGroup.slug });
		const refusal = await createProposal(em(), author, foreign, {
			fit: await fitOf(privateSet),
			title: 'Private in another group',
			rationale: '',
			embargoUntil: null,
			submit: false
		}).catch((error: unknown) => error);
		expect(refusal).toMatchObject({ status: 422 });
	});

	test('star search shows rows of a private set only to those who may see it', async () => {
		const set = await findCalibratorSet(em(), privateSet);
		const revision = await em().findOneOrFail(CalibratorRevision, { calibratorSet: set.id, number: 1 });
		const star = (revision.content as unknown as { rows: { star: string }[] }).rows[0].star;
		expect(star.startsWith(HIDDEN_STAR_PREFIX)).toBe(true);
		const search = (actor: Actor | null) => findStar(em(), actor, { q: star, limit: 10, after: null });
		expect((await search(null)).items).toEqual([]);
		expect((await search(outsideReader)).items).toEqual([]);
		expect((await search(scopeless(member))).items).toEqual([]);
		expect((await search(scopeless(admin))).items).toEqual([]);
		expect((await search(member)).items.map((item) => item.calibratorSet)).toEqual([privateSet]);
	});

	test("a set's visibility can only widen: the service refuses narrowing with 409, the database refuses it too", async () => {
		const narrowing = await statusOf(setCalibratorSetVisibility(em(), manager, publicSet, 'group'));
		expect(narrowing).toBe(409);
		const refusal = await setCalibratorSetVisibility(em(), admin, publicSet, 'group').catch((error) => error);
		expect(refusal).toMatchObject({ code: 'visibility-only-widens' });
		expect((refusal as RegistryError).errors[0].path).toBe('visibility');
		// Bypassing the service: the trigger refuses.
		await expect(
			em().getConnection().execute(`update app_calibrator_set set visibility = 'group' where slug = ?`, [publicSet])
		).rejects.toThrow(/visibility can only widen/);
		expect((await findCalibratorSet(em(), publicSet)).visibility).toBe('public');

		// Widening: a manager publishes a private set; a plain member may not.
		const widened = await newSet('group', hostCalibratorCsv({ seed: 11 }));
		expect(await statusOf(setCalibratorSetVisibility(em(), member, widened, 'public'))).toBe(403);
		expect(await statusOf(setCalibratorSetVisibility(em(), outsideReader, widened, 'public'))).toBe(404);
		await setCalibratorSetVisibility(em(), manager, widened, 'public');
		expect((await em().findOneOrFail(CalibratorSet, { slug: widened })).visibility).toBe('public');
	});
});

describe('token scopes: without read:private a token reads as anonymous', () => {
	test('relations, versions, sets, digests, stars and fits: a member’s scope-less token sees what anonymous sees', async () => {
		const privateRelation = await newRelation({ visibility: 'group' });
		const embargoed = await newRelation();
		await embargoedProposal(embargoed, { approve: true });
		const { version } = await findVersion(em(), member, embargoed, 1);
		const tokenOf = scopeless(member);

		const slugsOf = async (actor: Actor | null) =>
			(await listRelations(em(), actor, { sort: 'title', after: null, limit: 500, q: 'Invented W_VI' })).rows.map(
				(row) => `${row.slug}:${row.current?.version ?? '-'}:${row.versionCount}`
			);
		expect(await slugsOf(tokenOf)).toEqual(await slugsOf(null));
		expect(await slugsOf(scopeless(admin))).toEqual(await slugsOf(null));
		expect((await slugsOf(member)).some((row) => row.startsWith(`${privateRelation}:`))).toBe(true);
		expect((await slugsOf(tokenOf)).some((row) => row.startsWith(`${privateRelation}:`))).toBe(false);

		expect((await listVersions(em(), tokenOf, embargoed)).lifecycles).toEqual([]);
		expect(await statusOf(findByDigest(em(), tokenOf, version.digest))).toBe(404);
		expect((await findByDigest(em(), member, version.digest)).ref).toBe(`${embargoed}@1`);

		const set = await findCalibratorSet(em(), privateSet);
		expect(await canSeeCalibratorSet(em(), tokenOf, set)).toBe(false);
		expect(await canSeeCalibratorSet(em(), scopeless(admin), set)).toBe(false);
		expect(await canSeeCalibratorSet(em(), member, set)).toBe(true);

		// The author's own fit of the private set: seen in a session, not through a scope-less token.
		const fit = await fitOf(privateSet);
		expect((await findFitJob(em(), author, fit)).id).toBe(fit);
		expect(await statusOf(findFitJob(em(), scopeless(author), fit))).toBe(404);
		expect(
			await statusOf(
				requestFit(
					em(),
					scopeless(author),
					FitRequestSchema.parse({ calibrator_set: privateSet, revision: 1, ...HOST_FIT }),
					null
				)
			)
		).toBe(404);
		// …and an admin's token without read:private does not reach other people's fits.
		expect(await statusOf(findFitJob(em(), scopeless(admin), await fitOf(publicSet)))).toBe(404);
	});
});
