import type { MikroORM } from '@mikro-orm/postgresql';
import { expect } from '@playwright/test';
import { syntheticCalibrators, type RelationVersionContent } from '../../../src/lib/calibration/index';
import { Group, Relation, RelationVersion } from '../../../src/lib/server/entities/index';
import { createBearerToken, createGroupRow, createPerson, uniqueSlug } from './accounts';

/**
 * Registry content for the screen tests, made through the app's own write API (so versions are
 * frozen exactly as in production) plus a fast SQL path for hundreds of catalogue rows.
 */
export const origin = `http://127.0.0.1:${process.env.CANDLEBOOK_TEST_PORT ?? 4173}`;

async function call(token: string, method: string, path: string, body?: unknown, contentType = 'application/json') {
	const response = await fetch(`${origin}${path}`, {
		method,
		headers: { authorization: `Bearer ${token}`, ...(body === undefined ? {} : { 'content-type': contentType }) },
		body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body)
	});
	const text = await response.text();
	return { status: response.status, body: text ? JSON.parse(text) : null };
}

/**
 * Invented host-galaxy Cepheids (μ = 18.5) from a W_VI relation, with `outliers` stars pushed
 * 1.5 mag too faint so that 3σ clipping rejects them.
 */
function hostCsv(seed: number, outliers: number): string {
	const points = syntheticCalibrators({ zeroPoint: -5.9, slope: -3.3, intrinsicScatter: 0.06 }, { count: 40, seed });
	return [
		'star,cross_id,population,period_days,mag_W_VI,mag_err_W_VI,mu_host,mu_host_err',
		...points.map(
			(p, i) =>
				`Invented ${p.star},${7000 + i},classical_fundamental,${(10 ** p.logPeriod).toFixed(6)},` +
				`${(p.absMag + 18.5 + (i < outliers ? 1.5 : 0)).toFixed(4)},${p.absMagErr.toFixed(4)},18.5,0.03`
		)
	].join('\n');
}

export interface SeededRelation {
	group: string;
	slug: string;
	title: string;
	versions: (RelationVersionContent & { digest: string })[];
}

/** A public relation with `versions` approved versions, each fitted with 3σ clipping. */
export async function seedFittedRelation(
	orm: MikroORM,
	options: {
		versions?: number;
		outliers?: number;
		label?: string;
		/** Fitted with a seeded bootstrap; 200 resamples or more queue the fit, which is awaited here. */
		bootstrap?: { resamples: number; seed: number };
	} = {}
): Promise<SeededRelation> {
	const group = await createGroupRow(orm, uniqueSlug('screens'));
	const curator = await createPerson(orm, {
		label: 'screen curator',
		roles: ['reader', 'curator'],
		groups: [{ group, standing: 'member' }]
	});
	const reviewer = await createPerson(orm, {
		label: 'screen reviewer',
		roles: ['reader', 'reviewer'],
		groups: [{ group, standing: 'member' }]
	});
	const curatorToken = await createBearerToken(orm, curator.id, ['write']);
	const reviewerToken = await createBearerToken(orm, reviewer.id, ['review', 'write']);
	const set = uniqueSlug('screen-set');
	expect(
		(
			await call(curatorToken, 'POST', '/api/v1/calibrator-sets', {
				slug: set,
				title: 'Invented host Cepheids for screen tests',
				group,
				licence: 'CC0-1.0',
				citations: ['Invented calibrators, 2026']
			})
		).status
	).toBe(201);
	const upload = await call(
		curatorToken,
		'POST',
		`/api/v1/calibrator-sets/${set}/revisions?name=host.csv`,
		hostCsv(11, options.outliers ?? 2),
		'text/csv'
	);
	expect(upload.status).toBe(201);
	const slug = uniqueSlug(options.label ?? 'screen-w-vi');
	const title = `Invented W_VI screen relation ${slug}`;
	expect(
		(
			await call(curatorToken, 'POST', '/api/v1/relations', {
				slug,
				title,
				band: 'W_VI',
				population: 'classical_fundamental',
				anchor_type: 'geometric_host',
				group
			})
		).status
	).toBe(201);
	for (let n = 1; n <= (options.versions ?? 1); n++) {
		const fit = await call(curatorToken, 'POST', '/api/v1/fits', {
			calibrator_set: set,
			revision: 1,
			band: 'W_VI',
			population: 'classical_fundamental',
			anchor: 'host',
			method: n % 2 === 1 ? 'ml_scatter' : 'wls',
			clipping: { sigma: 3, max_iterations: 5 },
			...(options.bootstrap ? { bootstrap: options.bootstrap } : {})
		});
		let job = fit.body;
		for (let i = 0; i < 120 && (job.state === 'queued' || job.state === 'running'); i++) {
			await new Promise((resolve) => setTimeout(resolve, 500));
			job = (await call(curatorToken, 'GET', `/api/v1/jobs/${fit.body.id}`)).body;
		}
		expect(job.state).toBe('succeeded');
		const proposed = await call(curatorToken, 'POST', `/api/v1/relations/${slug}/proposals`, {
			fit: fit.body.id,
			title: `Version ${n}`,
			rationale: 'Invented calibrators for the screen tests.',
			submit: true
		});
		expect(proposed.status).toBe(201);
		const approved = await call(reviewerToken, 'POST', `/api/v1/proposals/${proposed.body.id}/reviews`, {
			decision: 'approve'
		});
		expect(approved.status).toBe(201);
	}
	const stored = await orm.em.fork().find(RelationVersion, { relation: { slug } }, { orderBy: { number: 'asc' } });
	return {
		group,
		slug,
		title,
		versions: stored.map((version) => ({
			...(version.content as unknown as RelationVersionContent),
			digest: version.digest
		}))
	};
}

/**
 * `count` public relations without versions, inserted in one statement: catalogue rows for the
 * volume test. Titles carry `tag` so a search finds exactly these.
 */
export async function insertBulkRelations(orm: MikroORM, count: number, tag: string): Promise<void> {
	const em = orm.em.fork();
	const groupSlug = await createGroupRow(orm, uniqueSlug('bulk'));
	const group = await em.findOneOrFail(Group, { slug: groupSlug });
	const owner = await createPerson(orm, { label: 'bulk owner', roles: ['reader', 'curator'] });
	const bands = ['W_VI', 'W_JK', 'V', 'Ks', 'F160W'];
	const start = Date.now() - count * 1000;
	const rows = Array.from({ length: count }, (_, i) => ({
		id: crypto.randomUUID(),
		slug: `${tag}-${String(i).padStart(4, '0')}`,
		title: `Bulk ${tag} relation ${String(i).padStart(4, '0')} (invented)`,
		description: '',
		band: bands[i % bands.length],
		population: i % 7 === 0 ? ('type2_w_vir' as const) : ('classical_fundamental' as const),
		magnitudeSystem: 'Vega' as const,
		anchorType: i % 3 === 0 ? ('parallax' as const) : ('geometric_host' as const),
		group: group.id,
		visibility: 'public' as const,
		requiredApprovals: 1,
		createdBy: owner.id,
		createdAt: new Date(start + i * 1000)
	}));
	await em.insertMany(Relation, rows);
}
