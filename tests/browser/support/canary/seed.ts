import type { MikroORM } from '@mikro-orm/postgresql';
import { expect } from '@playwright/test';
import { syntheticCalibrators } from '../../../../src/lib/calibration/index';
import type { GroupStanding, Role, TokenScope } from '../../../../src/lib/server/entities/index';
import { createBearerToken, createGroupRow, createPerson, createSessionCookie } from '../accounts';
import { api, HOST_FIT } from '../review-setup';
import { numberCanary, textCanary, type Canary, type CallerName } from './canaries';
import type { CrawlWorld } from './routes';

/**
 * The data the crawl looks for, made over the app's own write API: a public relation of a group with
 * a public version 1, an approved version 2 under embargo and a proposed version 3 (also embargoed);
 * a group-private calibrator set; a member's fit of it, approved as version 1 of a group-private
 * relation; a member's light-curve upload. Every text a
 * reader outside the group must not see carries a `cnry-` string, and the fits are of invented
 * Cepheids drawn from deliberately unreal relations (zero points −16 to −10 mag, slopes −13 to −10),
 * so their coefficients occur nowhere else. Slugs and ids of public things are not canaries.
 */
export const EMBARGO_UNTIL = new Date('2031-06-30T00:00:00Z');
const GROUP = 'canary-keepers';
const OTHER_GROUP = 'canary-neighbours';
const PRIVATE_RELATION = 'canary-private-relation';
const INSIDE: ReadonlySet<CallerName> = new Set<CallerName>(['group member', 'admin']);

export interface CrawlCaller {
	name: CallerName;
	/** Request headers that identify the caller. */
	headers: Record<string, string>;
	/** How the caller identifies itself (pages read only sessions). */
	kind: 'anonymous' | 'session' | 'token';
}

interface Person {
	id: string;
	token: string;
}

async function person(
	orm: MikroORM,
	label: string,
	roles: Role[],
	groups: { group: string; standing: GroupStanding }[],
	scopes: TokenScope[] = ['write', 'review', 'read:private']
): Promise<Person> {
	const user = await createPerson(orm, { label, roles: ['reader', ...roles], groups });
	return { id: user.id, token: await createBearerToken(orm, user.id, scopes) };
}

/**
 * Invented host Cepheids (μ = 30, so apparent magnitudes stay positive) from the relation
 * M = zeroPoint + slope·(log P − 1), with log P kept in `logPeriodRange` so that no star's absolute
 * magnitude comes near another canary.
 */
function calibratorCsv(options: {
	zeroPoint: number;
	slope: number;
	seed: number;
	logPeriodRange: [number, number];
	names: (index: number) => string;
	crossIdBase: number;
}): string {
	const points = syntheticCalibrators(
		{ zeroPoint: options.zeroPoint, slope: options.slope, intrinsicScatter: 0.04 },
		{ count: 30, seed: options.seed, logPeriodRange: options.logPeriodRange, absMagErrRange: [0.02, 0.05] }
	);
	return [
		'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
		...points.map(
			(p, i) =>
				`${options.names(i)},${options.crossIdBase + i},classical_fundamental,${(10 ** p.logPeriod).toFixed(6)},` +
				`${(p.absMag + 30).toFixed(4)},${p.absMagErr.toFixed(4)},30,0.03`
		)
	].join('\n');
}

async function createSet(
	owner: Person,
	slug: string,
	fields: { title: string; description?: string; citations?: string[]; visibility?: 'public' | 'group' }
) {
	const created = await api(owner.token, 'POST', '/api/v1/calibrator-sets', {
		slug,
		group: GROUP,
		licence: 'CC0-1.0',
		...fields,
		citations: fields.citations ?? ['Invented for the canary crawl, 2026']
	});
	expect(created.status, JSON.stringify(created.body)).toBe(201);
}

async function uploadRevision(owner: Person, slug: string, csv: string, note = ''): Promise<string> {
	const query = note ? `?note=${encodeURIComponent(note)}` : '';
	const uploaded = await api(owner.token, 'POST', `/api/v1/calibrator-sets/${slug}/revisions${query}`, csv, 'text/csv');
	expect(uploaded.status, JSON.stringify(uploaded.body)).toBe(201);
	return uploaded.body.digest as string;
}

async function fit(owner: Person, set: string, revision: number) {
	const done = await api(owner.token, 'POST', '/api/v1/fits', { calibrator_set: set, revision, ...HOST_FIT });
	expect(done.status, JSON.stringify(done.body)).toBe(200);
	const coefficients = done.body.result.coefficients as { zero_point: number; slope: number };
	return { job: done.body.id as string, zeroPoint: coefficients.zero_point, slope: coefficients.slope };
}

async function propose(author: Person, relation: string, fitJob: string, fields: Record<string, unknown>) {
	const proposed = await api(author.token, 'POST', `/api/v1/relations/${relation}/proposals`, {
		fit: fitJob,
		submit: true,
		...fields
	});
	expect(proposed.status, JSON.stringify(proposed.body)).toBe(201);
	return proposed.body.id as string;
}

async function comment(by: Person, proposal: string, body: string) {
	const posted = await api(by.token, 'POST', `/api/v1/proposals/${proposal}/comments`, { body });
	expect(posted.status, JSON.stringify(posted.body)).toBe(201);
}

async function approve(reviewer: Person, proposal: string): Promise<string> {
	const approved = await api(reviewer.token, 'POST', `/api/v1/proposals/${proposal}/reviews`, { decision: 'approve' });
	expect(approved.status, JSON.stringify(approved.body)).toBe(201);
	return approved.body.frozen_version.digest as string;
}

/** An invented Cepheid's light curve: a sawtooth-like pulsation sampled unevenly over 300 days. */
function lightCurveCsv(star: string): string {
	const period = 5.3721;
	const rows = Array.from({ length: 90 }, (_, k) => {
		const t = 1000 + k * 3.37 + 0.41 * Math.sin(k * 1.7);
		const phase = (t / period) % 1;
		const mag = 14.2 + 0.35 * Math.sin(2 * Math.PI * phase) + 0.12 * Math.sin(4 * Math.PI * phase + 0.9);
		return `${star},${t.toFixed(5)},${mag.toFixed(4)},0.012`;
	});
	return ['star,time,magnitude,error', ...rows].join('\n');
}

async function waitForUpload(owner: Person, id: string) {
	for (let attempt = 0; attempt < 300; attempt++) {
		const read = await api(owner.token, 'GET', `/api/v1/light-curves/uploads/${id}`);
		const state = read.body?.job?.state;
		if (state === 'succeeded') return;
		if (state === 'failed') throw new Error(`light-curve analysis failed: ${JSON.stringify(read.body.job)}`);
		await new Promise((resolve) => setTimeout(resolve, 200));
	}
	throw new Error(`light-curve upload ${id} was not analysed within 60 s`);
}

export interface CanaryWorld {
	callers: CrawlCaller[];
	/** What exists before the canaries are planted: the baseline the numbers are checked against. */
	baseline: CrawlWorld;
	/** Everything, once planted. */
	world: CrawlWorld;
	canaries: Canary[];
	/** The numeric canaries, for the uniqueness checks. */
	numbers: { label: string; value: number }[];
	/** Plants the proposals and the versions they make; call after the baseline crawl. */
	plant(): Promise<void>;
}

export async function seedCanaryWorld(orm: MikroORM): Promise<CanaryWorld> {
	await createGroupRow(orm, GROUP);
	await createGroupRow(orm, OTHER_GROUP);
	const inside = (standing: GroupStanding = 'member') => [{ group: GROUP, standing }];
	const outside = (standing: GroupStanding = 'member') => [{ group: OTHER_GROUP, standing }];
	const author = await person(orm, 'canary author', ['curator'], inside());
	const reviewer = await person(orm, 'canary reviewer', ['reviewer'], inside());
	const member = await person(orm, 'canary member', ['curator'], inside());
	// An admin who also holds the other roles, so curator and reviewer pages answer too.
	const admin = await person(orm, 'canary admin', ['admin', 'curator', 'reviewer'], []);
	const scopeless = await person(orm, 'canary scopeless', ['curator', 'reviewer'], inside('manager'), []);
	const neighbour = await person(orm, 'canary neighbour', ['curator', 'reviewer'], outside('manager'), [
		'read:private'
	]);
	const reader = await person(orm, 'canary reader', [], outside());
	const curator = await person(orm, 'canary curator', ['curator'], outside());

	const session = async (name: CallerName, who: Person): Promise<CrawlCaller> => ({
		name,
		headers: { cookie: `candlebook_session=${await createSessionCookie(orm, who.id)}` },
		kind: 'session'
	});
	const bearer = (name: CallerName, who: Person): CrawlCaller => ({
		name,
		headers: { authorization: `Bearer ${who.token}` },
		kind: 'token'
	});
	// Privileged callers first: a cache that kept their answer would then serve it to the rest.
	const callers: CrawlCaller[] = [
		await session('admin', admin),
		await session('group member', member),
		{ name: 'anonymous', headers: {}, kind: 'anonymous' },
		await session('reader outside the group', reader),
		await session('curator outside the group', curator),
		bearer('token without scopes', scopeless),
		bearer('token [read:private] of another group', neighbour)
	];

	// Public sets: the decoy behind version 1 (a realistic W_VI relation) and the one behind the embargo.
	const decoySet = 'canary-decoy-set';
	await createSet(author, decoySet, { title: 'Invented decoy Cepheids' });
	const decoyDigest = await uploadRevision(
		author,
		decoySet,
		calibratorCsv({
			zeroPoint: -5.9,
			slope: -3.3,
			seed: 31,
			logPeriodRange: [0.4, 1.8],
			names: (i) => `Lantern D-${i + 1}`,
			crossIdBase: 7100
		})
	);
	const embargoSet = 'canary-embargo-set';
	await createSet(author, embargoSet, { title: 'Invented Cepheids behind an embargoed version' });
	const embargoSetDigests: string[] = [];
	for (const [zeroPoint, slope, seed] of [
		[-14.83, -12.47, 32],
		[-15.52, -11.36, 33]
	]) {
		const csv = calibratorCsv({
			zeroPoint,
			slope,
			seed,
			logPeriodRange: [1.1, 1.7],
			names: (i) => `Lantern E-${i + 1}`,
			crossIdBase: 7200
		});
		embargoSetDigests.push(await uploadRevision(author, embargoSet, csv));
	}

	// The group-private set: its texts and star names are canaries.
	const privateSet = 'canary-private-set';
	const privateText = {
		title: 'cnry-set-title-h4q',
		description: 'cnry-set-description-w8n',
		citation: 'cnry-set-citation-z3k',
		note: 'cnry-set-note-r6v',
		star: 'cnry-star-m2t'
	};
	await createSet(author, privateSet, {
		title: privateText.title,
		description: privateText.description,
		citations: [privateText.citation],
		visibility: 'group'
	});
	const privateCsv = (seed: number) =>
		calibratorCsv({
			zeroPoint: -13.69,
			slope: -10.27,
			seed,
			logPeriodRange: [1.45, 1.7],
			names: (i) => `${privateText.star}-${i + 1}`,
			crossIdBase: 7300
		});
	const privateDigests = [
		await uploadRevision(author, privateSet, privateCsv(34)),
		await uploadRevision(author, privateSet, privateCsv(35), privateText.note)
	];

	// The relation: public, of the group, version 1 public and from the decoy set.
	const relation = 'canary-lantern-w-vi';
	const created = await api(author.token, 'POST', '/api/v1/relations', {
		slug: relation,
		title: 'Invented Lantern W_VI relation',
		band: 'W_VI',
		population: 'classical_fundamental',
		anchor_type: 'geometric_host',
		group: GROUP,
		required_approvals: 1
	});
	expect(created.status, JSON.stringify(created.body)).toBe(201);
	const decoyFit = await fit(author, decoySet, 1);
	const firstProposal = await propose(author, relation, decoyFit.job, { title: 'Lantern decoy, first version' });
	const firstDigest = await approve(reviewer, firstProposal);

	// Fits whose numbers become canaries once proposed (their jobs are their authors' alone).
	const embargoFit = await fit(author, embargoSet, 1);
	const pendingFit = await fit(author, embargoSet, 2);
	const privateFit = await fit(member, privateSet, 1);

	// A member's light-curve upload: its file and star names are the member's (and admins').
	const lightCurve = { star: 'cnry-lc-star-p5j', file: 'cnry-lc-file-b7d.csv' };
	const upload = await api(
		member.token,
		'POST',
		`/api/v1/light-curves/uploads?time_reference=HJD&time_offset_days=2450000&band=Ic&name=${lightCurve.file}`,
		lightCurveCsv(lightCurve.star),
		'text/csv'
	);
	expect(upload.status, JSON.stringify(upload.body)).toBe(201);
	await waitForUpload(member, upload.body.id);

	const privateRelationText = {
		title: 'cnry-privrel-title-n5b',
		description: 'cnry-privrel-description-g2y',
		proposalTitle: 'cnry-privrel-proposal-u4e'
	};
	const embargoText = {
		title: 'cnry-emb-title-k9d',
		rationale: 'cnry-emb-rationale-t5x',
		comment: 'cnry-emb-comment-v2c',
		pendingTitle: 'cnry-pend-title-q7s',
		pendingRationale: 'cnry-pend-rationale-j3m',
		pendingComment: 'cnry-pend-comment-f8w'
	};
	const numbers = [
		{ label: 'embargoed v2 zero point', value: embargoFit.zeroPoint },
		{ label: 'embargoed v2 slope', value: embargoFit.slope },
		{ label: 'pending proposal zero point', value: pendingFit.zeroPoint },
		{ label: 'pending proposal slope', value: pendingFit.slope },
		{ label: 'private-set fit zero point', value: privateFit.zeroPoint },
		{ label: 'private-set fit slope', value: privateFit.slope }
	];
	const canaries: Canary[] = [
		...numbers.map(({ label, value }) => numberCanary(label, value, INSIDE)),
		...Object.entries(embargoText).map(([field, text]) => textCanary(`embargo ${field}`, text, INSIDE)),
		...Object.entries(privateText).map(([field, text]) => textCanary(`private set ${field}`, text, INSIDE)),
		...privateDigests.map((digest, i) =>
			textCanary(`private set revision ${i + 1} digest`, digest.replace('sha256:', ''), INSIDE)
		),
		...Object.entries(lightCurve).map(([field, text]) => textCanary(`light-curve ${field}`, text, INSIDE))
	];

	const publicStars = ['Lantern D-1', 'Lantern E-1', '7101', '7201'];
	const baseline: CrawlWorld = {
		groups: [GROUP, OTHER_GROUP],
		relations: [{ slug: relation, versions: [1] }],
		calibratorSets: [
			{ slug: decoySet, revisions: [1] },
			{ slug: embargoSet, revisions: [1, 2] }
		],
		proposals: [{ id: firstProposal, relation }],
		jobs: [decoyFit.job],
		uploads: [],
		digests: [firstDigest, decoyDigest, ...embargoSetDigests],
		stars: publicStars
	};
	const world: CrawlWorld = {
		groups: baseline.groups,
		relations: [{ slug: relation, versions: [1, 2] }],
		calibratorSets: [...baseline.calibratorSets, { slug: privateSet, revisions: [1, 2] }],
		proposals: [...baseline.proposals],
		jobs: [decoyFit.job, embargoFit.job, pendingFit.job, privateFit.job],
		uploads: [{ id: upload.body.id, stars: [lightCurve.star] }],
		digests: [...baseline.digests, ...privateDigests],
		stars: [...publicStars, `${privateText.star}-1`, '7301']
	};

	return {
		callers,
		baseline,
		world,
		canaries,
		numbers,
		async plant() {
			const embargoed = await propose(author, relation, embargoFit.job, {
				title: embargoText.title,
				rationale: embargoText.rationale,
				embargo_until: EMBARGO_UNTIL.toISOString()
			});
			await comment(reviewer, embargoed, embargoText.comment);
			const embargoedDigest = await approve(reviewer, embargoed);
			const pending = await propose(author, relation, pendingFit.job, {
				title: embargoText.pendingTitle,
				rationale: embargoText.pendingRationale,
				embargo_until: EMBARGO_UNTIL.toISOString()
			});
			await comment(reviewer, pending, embargoText.pendingComment);
			world.proposals.push({ id: embargoed, relation }, { id: pending, relation });
			world.digests.push(embargoedDigest);
			canaries.push(textCanary('embargoed v2 digest', embargoedDigest.replace('sha256:', ''), INSIDE));

			// A group-private relation whose only version is the member's fit of the private set.
			const privateRelation = await api(member.token, 'POST', '/api/v1/relations', {
				slug: PRIVATE_RELATION,
				title: privateRelationText.title,
				description: privateRelationText.description,
				band: 'W_VI',
				population: 'classical_fundamental',
				anchor_type: 'geometric_host',
				group: GROUP,
				visibility: 'group',
				required_approvals: 1
			});
			expect(privateRelation.status, JSON.stringify(privateRelation.body)).toBe(201);
			const privateProposal = await propose(member, PRIVATE_RELATION, privateFit.job, {
				title: privateRelationText.proposalTitle
			});
			const privateDigest = await approve(reviewer, privateProposal);
			world.relations.push({ slug: PRIVATE_RELATION, versions: [1] });
			world.proposals.push({ id: privateProposal, relation: PRIVATE_RELATION });
			world.digests.push(privateDigest);
			canaries.push(
				...Object.entries(privateRelationText).map(([field, text]) =>
					textCanary(`private relation ${field}`, text, INSIDE)
				),
				textCanary('private relation v1 digest', privateDigest.replace('sha256:', ''), INSIDE)
			);
		}
	};
}
