import type { MikroORM } from '@mikro-orm/postgresql';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { sealRelationVersion, verifyDigest, type RelationVersionContent } from '../../src/lib/calibration/index';
import {
	CalibratorRevision,
	Relation,
	RelationVersion,
	User,
	VersionLifecycle
} from '../../src/lib/server/entities/index';
import type { Actor } from '../../src/lib/server/registry/actor';
import { createCalibratorSet, revisionRows, uploadRevision } from '../../src/lib/server/registry/calibrator-sets';
import { findByDigest } from '../../src/lib/server/registry/digest-lookup';
import { RegistryError } from '../../src/lib/server/registry/errors';
import { requestFit } from '../../src/lib/server/registry/fits';
import { createProposal, reviewProposal } from '../../src/lib/server/registry/proposals';
import {
	decodeCursor,
	encodeCursor,
	listRelations,
	relationDetail,
	type CatalogueQuery,
	type CatalogueRow
} from '../../src/lib/server/registry/relation-catalogue';
import { relationFeed } from '../../src/lib/server/registry/relation-feed';
import { createRelation } from '../../src/lib/server/registry/relations';
import { reproduceContent, reproduceVersion } from '../../src/lib/server/registry/reproduce';
import { FitRequestSchema } from '../../src/lib/server/registry/schemas';
import { findStar } from '../../src/lib/server/registry/star-search';
import { citationSource } from '../../src/lib/server/registry/version-citation';
import { diffVersions } from '../../src/lib/server/registry/version-diff';
import { deprecateVersion } from '../../src/lib/server/registry/versions';
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
 * The read side of the registry against real PostgreSQL: the catalogue's filters, sorts, keyset pages,
 * states and visibility; relation details; where a star appears; digests; diffs; and reproducing a
 * frozen version from its frozen spec and calibrators.
 */
let orm: MikroORM;
let store: TestObjectStore;
let groupSlug: string;
let curator: Actor;
let reviewer: Actor;
let member: Actor;
let outsider: Actor;
let admin: Actor;
let setSlug: string;
/** Every relation this file creates has this word in its title, so `q` isolates them from other files' rows. */
const TOKEN = unique('readcat').replace('-', '');
const REVIEWER_ORCID = '0000-0002-1825-0097';

const em = () => orm.em.fork();

/** Invented host Cepheids plus one 2-mag outlier (clipped) and one first-overtone star (excluded). */
function calibratorCsv(seed: number): string {
	const lines = hostCalibratorCsv({ seed }).trimEnd().split('\n');
	const [header] = lines;
	const columns = header.split(',');
	const magAt = columns.indexOf('mag_W_VI');
	const outlier = lines[5].split(',');
	outlier[magAt] = (Number(outlier[magAt]) + 2).toFixed(4);
	lines[5] = outlier.join(',');
	const overtone = lines[1].split(',');
	overtone[0] = 'Invented overtone star';
	overtone[1] = '8999';
	overtone[2] = 'classical_first_overtone';
	return [...lines, overtone.join(',')].join('\n') + '\n';
}

beforeAll(async () => {
	orm = await openTestOrm();
	store = await startTestObjectStore();
	const group = await createGroup(orm, 'read');
	groupSlug = group.slug;
	const inGroup = [{ groupId: group.id, standing: 'member' as const }];
	curator = await createActor(orm, 'read-curator', ['reader', 'curator'], inGroup);
	reviewer = await createActor(orm, 'read-reviewer', ['reader', 'reviewer'], inGroup);
	member = await createActor(orm, 'read-member', ['reader'], inGroup);
	outsider = await createActor(orm, 'read-outsider', ['reader']);
	admin = await createActor(orm, 'read-admin', ['reader', 'admin']);
	const fork = em();
	(await fork.findOneOrFail(User, reviewer.id)).orcid = REVIEWER_ORCID;
	await fork.flush();
	setSlug = unique('read-set');
	await createCalibratorSet(em(), curator, {
		slug: setSlug,
		title: 'Invented host Cepheids',
		description: '',
		group: groupSlug,
		licence: 'CC0-1.0',
		citations: ['Invented Survey Team (2026), Invented Journal 1, 1']
	});
	for (const seed of [7, 8]) {
		await uploadRevision(em(), store.storage, curator, setSlug, {
			bytes: new TextEncoder().encode(calibratorCsv(seed)),
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
});

async function newRelation(title: string, options: { visibility?: 'public' | 'group'; band?: string } = {}) {
	const relation = await createRelation(em(), curator, {
		slug: unique('read-rel'),
		title: `${title} ${TOKEN}`,
		description: `Invented relation for the catalogue test; *${title}*.`,
		band: options.band ?? 'W_VI',
		population: 'classical_fundamental',
		anchorType: 'geometric_host',
		group: groupSlug,
		visibility: options.visibility ?? 'public',
		requiredApprovals: 1,
		magnitudeSystem: null
	});
	return relation.slug;
}

async function approve(relation: string, options: { revision?: number; embargoUntil?: Date; fit?: object } = {}) {
	const request = FitRequestSchema.parse({
		calibrator_set: setSlug,
		revision: options.revision ?? 1,
		...HOST_FIT,
		...options.fit
	});
	const { job } = await requestFit(em(), curator, request, null);
	expect(job.state).toBe('succeeded');
	const proposal = await createProposal(em(), curator, relation, {
		fit: job.id,
		title: unique('read-proposal'),
		rationale: `Rationale for revision ${options.revision ?? 1}.`,
		embargoUntil: options.embargoUntil ?? null,
		submit: true
	});
	const outcome = await reviewProposal(em(), reviewer, proposal.id, 'approve', '');
	return outcome.frozen!;
}

const query = (extra: Partial<CatalogueQuery> = {}): CatalogueQuery => ({
	q: TOKEN,
	sort: 'title',
	after: null,
	limit: 50,
	...extra
});
const slugsOf = (rows: CatalogueRow[]) => rows.map((row) => row.slug);

let active: string;
let proposed: string;
let retired: string;
let privateRelation: string;
let embargoed: string;
let superseding: string;

describe('the relation catalogue', () => {
	beforeAll(async () => {
		active = await newRelation('Alpha active');
		await approve(active);
		proposed = await newRelation('Bravo proposed', { band: 'V' });
		retired = await newRelation('Charlie retired');
		await approve(retired);
		await deprecateVersion(em(), reviewer, retired, 1, { reason: 'An invented zero-point error.', successor: null });
		privateRelation = await newRelation('Delta private', { visibility: 'group' });
		await approve(privateRelation);
		embargoed = await newRelation('Echo embargoed');
		await approve(embargoed);
		await approve(embargoed, { revision: 2, embargoUntil: new Date(Date.now() + 30 * 86_400_000) });
		superseding = await newRelation('Foxtrot superseded');
		await approve(superseding);
		await approve(superseding, { revision: 2 });
		await deprecateVersion(em(), reviewer, superseding, 1, { reason: 'Superseded by revision 2 data.', successor: 2 });
	});

	test('states: active has a current version, proposed none approved, retired every version deprecated', async () => {
		const { rows } = await listRelations(em(), member, query());
		const bySlug = new Map(rows.map((row) => [row.slug, row]));
		expect(bySlug.get(active)).toMatchObject({ state: 'active', versionCount: 1, current: { version: 1 } });
		expect(bySlug.get(proposed)).toMatchObject({ state: 'proposed', versionCount: 0, current: null });
		expect(bySlug.get(retired)).toMatchObject({ state: 'retired', versionCount: 1, current: null });
		expect(bySlug.get(superseding)).toMatchObject({ state: 'active', versionCount: 2, current: { version: 2 } });
		const stored = await em().findOneOrFail(RelationVersion, { relation: { slug: active }, number: 1 });
		expect(bySlug.get(active)!.current!.digest).toBe(stored.digest);
		for (const state of ['active', 'proposed', 'retired'] as const) {
			const filtered = await listRelations(em(), member, query({ state }));
			expect(filtered.rows.every((row) => row.state === state)).toBe(true);
			expect(slugsOf(filtered.rows).sort()).toEqual(
				rows
					.filter((row) => row.state === state)
					.map((row) => row.slug)
					.sort()
			);
		}
	});

	test('updated_at is the latest approval or deprecation, else the creation', async () => {
		const { rows } = await listRelations(em(), member, query());
		const bySlug = new Map(rows.map((row) => [row.slug, row]));
		const lifecycle = await em().findOneOrFail(VersionLifecycle, { relation: { slug: retired }, number: 1 });
		expect(bySlug.get(retired)!.updatedAt.toISOString()).toBe(lifecycle.deprecatedAt!.toISOString());
		const created = await em().findOneOrFail(Relation, { slug: proposed });
		expect(bySlug.get(proposed)!.updatedAt.toISOString()).toBe(created.createdAt.toISOString());
		const version = await em().findOneOrFail(RelationVersion, { relation: { slug: active }, number: 1 });
		const approvedAt = (version.content as unknown as RelationVersionContent).approved_at;
		expect(bySlug.get(active)!.updatedAt.toISOString()).toBe(new Date(approvedAt).toISOString());
	});

	test('group-private relations: members and admins only; embargoed versions: the group only', async () => {
		const seen = async (actor: Actor | null) => slugsOf((await listRelations(em(), actor, query())).rows);
		expect(await seen(member)).toContain(privateRelation);
		expect(await seen(admin)).toContain(privateRelation);
		expect(await seen(outsider)).not.toContain(privateRelation);
		expect(await seen(null)).not.toContain(privateRelation);
		expect((await seen(null)).length).toBe((await seen(member)).length - 1);

		const echo = async (actor: Actor | null) =>
			(await listRelations(em(), actor, query())).rows.find((row) => row.slug === embargoed)!;
		expect(await echo(member)).toMatchObject({ versionCount: 2, current: { version: 2 } });
		expect(await echo(null)).toMatchObject({ versionCount: 1, current: { version: 1 } });
		expect(await echo(outsider)).toMatchObject({ versionCount: 1, current: { version: 1 } });
	});

	test('filters: band, population, anchor and a case-insensitive search of slug, title and description', async () => {
		expect(slugsOf((await listRelations(em(), member, query({ band: 'V' }))).rows)).toEqual([proposed]);
		expect((await listRelations(em(), member, query({ population: 'type2_w_vir' }))).rows).toEqual([]);
		expect((await listRelations(em(), member, query({ anchor: 'parallax' }))).rows).toEqual([]);
		expect((await listRelations(em(), member, query({ anchor: 'geometric_host' }))).rows.length).toBe(6);
		expect(slugsOf((await listRelations(em(), member, query({ q: `CHARLIE RETIRED ${TOKEN}` }))).rows)).toEqual([
			retired
		]);
		expect(slugsOf((await listRelations(em(), member, { ...query(), q: retired })).rows)).toEqual([retired]);
		// In the description only ("*Delta private*"), and LIKE wildcards are taken literally.
		expect(slugsOf((await listRelations(em(), member, query({ q: '*delta private*' }))).rows)).toEqual([
			privateRelation
		]);
		expect((await listRelations(em(), member, query({ q: `${TOKEN}%` }))).rows).toEqual([]);
	});

	test('sorts by title either way, by band, and by update time; keyset pages join up to the whole list', async () => {
		const everything = (await listRelations(em(), member, query())).rows;
		const byTitle = [...everything].sort(
			(a, b) => (a.title.toLowerCase() < b.title.toLowerCase() ? -1 : 1) || a.slug.localeCompare(b.slug)
		);
		expect(slugsOf(everything)).toEqual(slugsOf(byTitle));
		expect(slugsOf((await listRelations(em(), member, query({ sort: '-title' }))).rows)).toEqual(
			slugsOf(byTitle).reverse()
		);
		const byBand = (await listRelations(em(), member, query({ sort: 'band' }))).rows;
		expect(byBand.map((row) => row.band)).toEqual(['V', 'W_VI', 'W_VI', 'W_VI', 'W_VI', 'W_VI']);
		// Relations made in one transaction share their timestamp (the database orders those by slug, to
		// the microsecond, finer than a JS Date): check the order, and that nothing is lost or repeated.
		const byUpdate = (await listRelations(em(), member, query({ sort: 'updated' }))).rows;
		expect(slugsOf(byUpdate).sort()).toEqual(slugsOf(everything).sort());
		byUpdate
			.slice(1)
			.forEach((row, i) => expect(row.updatedAt.getTime()).toBeGreaterThanOrEqual(byUpdate[i].updatedAt.getTime()));

		for (const sort of ['title', '-title', 'band', 'updated', '-updated'] as const) {
			const whole = slugsOf((await listRelations(em(), member, query({ sort }))).rows);
			const paged: string[] = [];
			let after: string[] | null = null;
			for (let page = 0; page < 10; page++) {
				const result = await listRelations(em(), member, query({ sort, limit: 2, after }));
				paged.push(...slugsOf(result.rows));
				if (!result.nextAfter) break;
				// The cursor survives its opaque encoding, and belongs to its sort only.
				after = decodeCursor(sort, encodeCursor(sort, result.nextAfter));
				expect(after).toEqual(result.nextAfter);
			}
			expect(paged).toEqual(whole);
		}
		expect(decodeCursor('title', encodeCursor('band', ['a', 'b', 'c']))).toBeNull();
		expect(decodeCursor('title', 'not-a-cursor')).toBeNull();
	});

	test('a relation’s details: every visible version with its standing, successor and embargo', async () => {
		const { relation, versions } = await relationDetail(em(), null, superseding);
		expect(relation.state).toBe('active');
		expect(versions.map((v) => [v.number, v.lifecycle, v.successor, v.deprecationReason])).toEqual([
			[1, 'deprecated', 2, 'Superseded by revision 2 data.'],
			[2, 'current', null, null]
		]);
		const forPublic = await relationDetail(em(), null, embargoed);
		expect(forPublic.versions.map((v) => [v.number, v.lifecycle, v.embargoed])).toEqual([[1, 'current', false]]);
		const forMember = await relationDetail(em(), member, embargoed);
		expect(forMember.versions.map((v) => [v.number, v.lifecycle, v.embargoed])).toEqual([
			[1, 'superseded', false],
			[2, 'current', true]
		]);
		await expect(relationDetail(em(), outsider, privateRelation)).rejects.toMatchObject({ status: 404 });
		await expect(relationDetail(em(), null, unique('no-such'))).rejects.toMatchObject({ status: 404 });
	});

	test('the feed has one entry per approval and per deprecation the viewer may see', async () => {
		const feed = await relationFeed(em(), null, superseding, 'http://candlebook.test');
		expect(feed.entries.map((entry) => entry.title).sort()).toEqual(
			[`Deprecated: ${superseding}@1`, `New version: ${superseding}@1`, `New version: ${superseding}@2`].sort()
		);
		expect((await relationFeed(em(), null, embargoed, 'http://x.test')).entries).toHaveLength(1);
		expect((await relationFeed(em(), member, embargoed, 'http://x.test')).entries).toHaveLength(2);
	});

	test('stays fast with 500 more relations, one statement per page', async () => {
		const bulk = `${TOKEN}bulk`;
		const fork = em();
		const template = await fork.findOneOrFail(RelationVersion, { relation: { slug: active }, number: 1 });
		const base = await fork.findOneOrFail(Relation, { slug: active });
		const relations = Array.from({ length: 500 }, (_, i) => ({
			id: crypto.randomUUID(),
			slug: `${bulk}-${String(i).padStart(3, '0')}`,
			title: `Bulk ${bulk} ${i}`,
			description: '',
			band: i % 2 ? 'W_VI' : 'V',
			population: 'classical_fundamental' as const,
			magnitudeSystem: 'Vega' as const,
			anchorType: 'geometric_host' as const,
			group: base.group.id,
			visibility: 'public' as const,
			requiredApprovals: 1,
			createdBy: curator.id,
			createdAt: new Date()
		}));
		await fork.insertMany(Relation, relations);
		// Half of them get a real frozen version: the template's content under their own ref, sealed anew.
		const { digest: _digest, ...content } = template.content as unknown as RelationVersionContent & { digest: string };
		const versions = relations
			.filter((_, i) => i % 2 === 0)
			.map((relation) => {
				const sealed = sealRelationVersion({ ...content, ref: `${relation.slug}@1` });
				return { relation, sealed, id: crypto.randomUUID() };
			});
		await fork.insertMany(
			RelationVersion,
			versions.map(({ relation, sealed, id }) => ({
				id,
				relation: relation.id,
				number: 1,
				digest: sealed.digest,
				content: sealed as unknown as Record<string, unknown>,
				proposalId: null,
				createdAt: new Date()
			}))
		);
		await fork.insertMany(
			VersionLifecycle,
			versions.map(({ relation, id }) => ({
				id,
				relation: relation.id,
				number: 1,
				status: 'current' as const,
				updatedAt: new Date()
			}))
		);
		const timings: number[] = [];
		const seen: string[] = [];
		let after: string[] | null = null;
		do {
			const started = performance.now();
			const page = await listRelations(em(), member, { q: bulk, sort: '-updated', after, limit: 200 });
			timings.push(performance.now() - started);
			seen.push(...slugsOf(page.rows));
			after = page.nextAfter;
		} while (after);
		expect(seen).toHaveLength(500);
		expect(new Set(seen).size).toBe(500);
		const started = performance.now();
		const all = await listRelations(em(), null, { sort: 'title', after: null, limit: 200 });
		timings.push(performance.now() - started);
		expect(all.rows).toHaveLength(200);
		console.log(`catalogue pages of 200 over ≥500 relations: ${timings.map((t) => t.toFixed(1)).join(', ')} ms`);
		expect(Math.max(...timings)).toBeLessThan(1000);
	});
});

describe('stars, digests, diffs, citations and reproductions', () => {
	let relation: string;
	let frozen: { ref: string; version: number; digest: string };

	beforeAll(async () => {
		relation = await newRelation('Golf stars');
		frozen = await approve(relation);
		await approve(relation, { revision: 2, fit: { bootstrap: { resamples: 40, seed: 11 } } });
	});

	test('a star by name or cross id: the revisions that hold it and what each version did with it', async () => {
		const content = (await em().findOneOrFail(RelationVersion, { relation: { slug: relation }, number: 1 }))
			.content as unknown as RelationVersionContent;
		const clipped = content.rejected[0];
		expect(clipped, 'the 2-mag outlier is clipped').toBeDefined();
		const found = await findStar(em(), null, { q: clipped.star.toUpperCase(), limit: 50, after: null });
		const inSet = found.items.filter((item) => item.calibratorSet === setSlug);
		// The same invented star names appear in both revisions; version 1 was fitted from revision 1.
		expect(inSet.map((item) => item.revision)).toEqual([1, 2]);
		const use = inSet[0].versions.find((v) => v.relation === relation)!;
		expect(use).toMatchObject({ usage: 'rejected', reason: 'sigma_clip', version: 1 });
		expect(use.standardizedResidual).toBe(clipped.standardized_residual);

		const byCrossId = await findStar(em(), null, { q: '9003', limit: 50, after: null });
		const mine = byCrossId.items.filter((item) => item.calibratorSet === setSlug);
		expect(mine.map((item) => [item.revision, item.star])).toEqual([
			[1, 'Invented synthetic-0004'],
			[2, 'Invented synthetic-0004']
		]);
		expect(mine[0].versions.find((v) => v.relation === relation)).toMatchObject({ usage: 'used', reason: null });
		expect(mine[1].versions.find((v) => v.relation === relation)).toMatchObject({ usage: 'used', version: 2 });

		const overtone = await findStar(em(), null, { q: 'invented overtone star', limit: 50, after: null });
		const excluded = overtone.items.find((item) => item.calibratorSet === setSlug && item.revision === 1)!;
		expect(excluded.versions.find((v) => v.relation === relation)).toMatchObject({
			usage: 'excluded',
			reason: 'population_not_selected'
		});

		const paged = await findStar(em(), null, { q: '9003', limit: 1, after: null });
		expect(paged.items).toHaveLength(1);
		expect(paged.nextAfter).not.toBeNull();
		expect((await findStar(em(), null, { q: unique('nobody'), limit: 50, after: null })).items).toEqual([]);
	});

	test('a digest names its version or calibrator revision; hidden ones answer 404', async () => {
		expect(await findByDigest(em(), null, frozen.digest)).toEqual({
			kind: 'relation_version',
			ref: frozen.ref,
			href: `/api/v1/pins/${frozen.ref}`,
			digest: frozen.digest
		});
		const revision = await em().findOneOrFail(CalibratorRevision, { calibratorSet: { slug: setSlug }, number: 2 });
		expect(await findByDigest(em(), null, revision.digest)).toMatchObject({
			kind: 'calibrator_revision',
			ref: `${setSlug}@2`
		});
		const hidden = await em().findOneOrFail(RelationVersion, { relation: { slug: embargoed }, number: 2 });
		await expect(findByDigest(em(), null, hidden.digest)).rejects.toMatchObject({ status: 404 });
		expect((await findByDigest(em(), member, hidden.digest)).ref).toBe(`${embargoed}@2`);
		const secret = await em().findOneOrFail(RelationVersion, { relation: { slug: privateRelation }, number: 1 });
		await expect(findByDigest(em(), outsider, secret.digest)).rejects.toMatchObject({ status: 404 });
		await expect(findByDigest(em(), null, `sha256:${'0'.repeat(64)}`)).rejects.toMatchObject({ status: 404 });
	});

	test('two versions compared: coefficients, the settings that changed, the calibrators and the rationale', async () => {
		const diff = await diffVersions(em(), null, relation, 1, 2);
		expect(diff.from.ref).toBe(`${relation}@1`);
		expect(diff.comparison.coefficients.map((c) => c.name)).toEqual([
			'zero_point',
			'slope',
			'metallicity_term',
			'intrinsic_scatter'
		]);
		const [v1, v2] = await Promise.all(
			[1, 2].map(
				async (number) =>
					(await em().findOneOrFail(RelationVersion, { relation: { slug: relation }, number }))
						.content as unknown as RelationVersionContent
			)
		);
		expect(diff.comparison.coefficients[1].delta).toBeCloseTo(v2.coefficients.slope - v1.coefficients.slope, 12);
		expect(diff.comparison.settings.map((s) => s.path)).toEqual(
			expect.arrayContaining(['calibrator_set.revision', 'fit.bootstrap.seed'])
		);
		expect(diff.calibrators?.changed.length).toBeGreaterThan(0);
		expect(diff.comparison.rationale.some((part) => part.kind !== 'same')).toBe(true);
		const refusal = await diffVersions(em(), null, relation, 1, 9).catch((error: unknown) => error);
		expect(refusal).toBeInstanceOf(RegistryError);
		expect(refusal).toMatchObject({ status: 422, errors: [{ path: 'to' }] });
		await expect(diffVersions(em(), null, embargoed, 1, 2)).rejects.toMatchObject({ status: 422 });
		await expect(diffVersions(em(), outsider, privateRelation, 1, 1)).rejects.toMatchObject({ status: 404 });
	});

	test('a citation names the author, the approver with ORCID iD, and the calibrator set’s required citation', async () => {
		const source = await citationSource(em(), null, relation, 1, 'http://candlebook.test');
		expect(source).toMatchObject({
			slug: relation,
			version: 1,
			digest: frozen.digest,
			url: `http://candlebook.test/relations/${relation}/versions/1`,
			authors: [{ name: curator.displayName, orcid: null }],
			approvedBy: [{ name: reviewer.displayName, orcid: REVIEWER_ORCID }],
			requiredCitations: ['Invented Survey Team (2026), Invented Journal 1, 1']
		});
	});

	test('reproducing an untouched version, with and without a seeded bootstrap, gives its digest exactly', async () => {
		for (const number of [1, 2]) {
			const reproduction = await reproduceVersion(em(), null, relation, number);
			expect(reproduction.differences).toEqual([]);
			expect(reproduction).toMatchObject({ digestMatches: true, maxRelativeDifference: 0 });
			const stored = await em().findOneOrFail(RelationVersion, { relation: { slug: relation }, number });
			expect(reproduction.recomputedDigest).toBe(stored.digest);
			// The digest rule, independently: sha256 over the canonical JSON without `digest`.
			expect(verifyDigest(stored.content).computed).toBe(reproduction.recomputedDigest);
		}
		await expect(reproduceVersion(em(), null, embargoed, 2)).rejects.toMatchObject({ status: 404 });
	});

	test('a tampered copy of the stored version, or of its calibrator rows, is detected leaf by leaf', async () => {
		const version = await em().findOneOrFail(RelationVersion, { relation: { slug: relation }, number: 1 });
		const stored = version.content as unknown as RelationVersionContent & { digest: string };
		const revision = await em().findOneOrFail(CalibratorRevision, { calibratorSet: { slug: setSlug }, number: 1 });
		const rows = revisionRows(revision);

		// Frozen rows cannot be changed, even by SQL, so the tampering happens in copies.
		const tampered = structuredClone(stored);
		tampered.coefficients.slope += 0.01;
		const fromTampered = reproduceContent(tampered, rows);
		expect(fromTampered.digestMatches).toBe(false);
		expect(fromTampered.recomputedDigest).toBe(stored.digest);
		expect(fromTampered.differences).toEqual([
			{ path: 'coefficients.slope', stored: tampered.coefficients.slope, recomputed: stored.coefficients.slope }
		]);
		expect(fromTampered.maxRelativeDifference).toBeCloseTo(
			0.01 / Math.max(Math.abs(tampered.coefficients.slope), Math.abs(stored.coefficients.slope)),
			9
		);

		const shifted = structuredClone(rows);
		const used = shifted.find((row) => !stored.rejected.some((r) => r.star === row.star))!;
		used.values.mag_W_VI = (used.values.mag_W_VI as number) + 0.3;
		const fromShifted = reproduceContent(stored, shifted);
		expect(fromShifted.digestMatches).toBe(false);
		expect(fromShifted.recomputedDigest).not.toBe(stored.digest);
		expect(fromShifted.differences.map((d) => d.path)).toEqual(expect.arrayContaining(['coefficients.zero_point']));
		expect(fromShifted.maxRelativeDifference).toBeGreaterThan(0);
	});
});
