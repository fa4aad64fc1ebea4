import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { ACCESS_POLICY, type AccessRule } from '../../../../src/lib/server/auth/access-policy';
import { PROPOSAL_STATES } from '../../../../src/lib/review/proposal-workflow';
import { QUEUE_VIEWS } from '../../../../src/lib/server/review/review-queue';

/**
 * The crawl's URLs, derived from the access policy: every GET row, its route parameters filled in
 * from the seeded data, and its query parameters from the OpenAPI document (every enum value, e.g.
 * each `format=`) plus those the route code reads that the document does not list. Every page is
 * also requested as its `__data.json`.
 */
export interface CrawlWorld {
	groups: string[];
	relations: { slug: string; versions: number[] }[];
	calibratorSets: { slug: string; revisions: number[] }[];
	proposals: { id: string; relation: string }[];
	jobs: string[];
	uploads: { id: string; stars: string[] }[];
	digests: string[];
	/** Star names and cross ids to search for. */
	stars: string[];
}

export interface CrawlTarget {
	/** The access-policy row, e.g. `GET /relations/[slug]`. */
	row: string;
	/** Path and query. */
	path: string;
	/** Whether the route is a page (rather than an endpoint). */
	page: boolean;
	/** The page's data endpoint rather than the page. */
	data: boolean;
}

type OpenApiParameter = { name: string; in: string; required?: boolean; schema?: { enum?: string[] } };
export type OpenApiDocument = { paths: Record<string, Record<string, { parameters?: OpenApiParameter[] }>> };

const ROUTES_DIR = join(process.cwd(), 'src', 'routes');
const isPage = (route: string) => existsSync(join(ROUTES_DIR, route, '+page.svelte'));

/** GET rows, plus catch-all rows (which answer GET too). */
export const crawledRows = (): AccessRule[] =>
	ACCESS_POLICY.filter((rule) => rule.method === 'GET' || rule.method === '*');

export const rowLabel = (rule: AccessRule) => `${rule.method} ${rule.route}`;

const pairs = (numbers: number[]) =>
	numbers.flatMap((from, i) => numbers.slice(i + 1).map((to) => [from, to] as const));

/** Values for one route parameter, given the parameters already chosen to its left. */
function parameterValues(
	world: CrawlWorld,
	route: string,
	name: string,
	previousSegment: string,
	chosen: Record<string, string>
): string[] {
	const relation = () => world.relations.find((r) => r.slug === chosen.slug);
	const set = () => world.calibratorSets.find((s) => s.slug === chosen.slug);
	switch (`${previousSegment}/${name}`) {
		case 'groups/slug':
			return world.groups;
		case 'relations/slug':
			return world.relations.map((r) => r.slug);
		case 'calibrator-sets/slug':
			return world.calibratorSets.map((s) => s.slug);
		case 'versions/n':
			return (relation()?.versions ?? []).map(String);
		case 'revisions/n':
			return (set()?.revisions ?? []).map(String);
		case 'proposals/id':
		case 'review/id':
			return world.proposals.map((p) => p.id);
		case 'jobs/id':
			return world.jobs;
		case 'uploads/id':
		case 'light-curves/id':
			return world.uploads.map((u) => u.id);
		case '[id]/star':
			return world.uploads.find((u) => u.id === chosen.id)?.stars ?? [];
		case 'pins/ref':
			return world.relations.flatMap((r) => r.versions.map((n) => `${r.slug}@${n}`));
		case 'digests/digest':
			return world.digests;
		case 'v1/...path':
			return ['no-such-resource'];
	}
	throw new Error(
		`The crawl does not know what fills [${name}] after "${previousSegment}" in ${route}: add it to parameterValues in tests/browser/support/canary/routes.ts`
	);
}

/** Every path of a route id, with its parameters filled in every seeded way. */
export function expandRoute(world: CrawlWorld, route: string): { path: string; params: Record<string, string> }[] {
	let partial = [{ segments: [] as string[], params: {} as Record<string, string> }];
	const segments = route.split('/').slice(1);
	segments.forEach((segment, index) => {
		const match = /^\[(\.\.\.)?(\w+)\]$/.exec(segment);
		if (!match) {
			partial = partial.map((p) => ({ ...p, segments: [...p.segments, segment] }));
			return;
		}
		const name = (match[1] ?? '') + match[2];
		const previous = segments[index - 1] ?? '';
		partial = partial.flatMap((p) =>
			parameterValues(world, route, name, previous, p.params).map((value) => ({
				segments: [...p.segments, encodeURIComponent(value).replace(/%40/g, '@').replace(/%3A/g, ':')],
				params: { ...p.params, [match[2]]: value }
			}))
		);
	});
	return partial.map((p) => ({ path: `/${p.segments.join('/')}`, params: p.params }));
}

/**
 * Query parameters the route code reads that the OpenAPI document does not describe (pages, and the
 * proposal list), each with the values to try.
 */
function codeQueryVariants(world: CrawlWorld, route: string, params: Record<string, string>): string[][] {
	const set = world.calibratorSets.find((s) => s.slug === params.slug);
	switch (route) {
		case '/api/v1/proposals':
			return [
				...PROPOSAL_STATES.map((state) => ['state', state]),
				...world.relations.map((r) => ['relation', r.slug]),
				['awaiting', 'me']
			];
		// The queue filters by state through the same service as /api/v1/proposals, crawled with every state.
		case '/review':
			return [...QUEUE_VIEWS.map((view) => ['view', view]), ...world.groups.map((group) => ['group', group])];
		case '/relations':
			return world.relations.map((r) => ['q', r.slug]);
		case '/relations/[slug]/refit':
			return [
				// A proposal of another relation is refused before anything is read.
				...world.proposals.filter((p) => p.relation === params.slug).map((p) => ['proposal', p.id]),
				...world.jobs.map((id) => ['job', id]),
				...world.calibratorSets.map((s) => ['set', `${s.slug}@${s.revisions.at(-1)}`])
			];
		case '/calibrator-sets/[slug]':
		case '/api/v1/calibrator-sets/[slug]/diff':
			return pairs(set?.revisions ?? []).map(([from, to]) => ['from', String(from), 'to', String(to)]);
		case '/admin/audit':
			return [...world.proposals.map((p) => p.id), ...world.jobs].map((id) => ['subject', id]);
	}
	return [];
}

/** Query variants from the OpenAPI operation: one per enum value, and the required parameters filled in. */
function openApiQueryVariants(
	world: CrawlWorld,
	document: OpenApiDocument,
	operationPath: string,
	params: Record<string, string>
): { required: string[][]; variants: string[][] } {
	const parameters = (document.paths[operationPath]?.get?.parameters ?? []).filter((p) => p.in === 'query');
	const relation = world.relations.find((r) => r.slug === params.slug);
	const set = world.calibratorSets.find((s) => s.slug === params.slug);
	const numbers = operationPath.includes('/relations/') ? relation?.versions : set?.revisions;
	const required: string[][] = [];
	const variants: string[][] = [];
	const names = new Set(parameters.map((p) => p.name));
	if (names.has('from') && names.has('to'))
		required.push(...pairs(numbers ?? []).map(([from, to]) => ['from', String(from), 'to', String(to)]));
	for (const parameter of parameters) {
		if (parameter.schema?.enum) variants.push(...parameter.schema.enum.map((value) => [parameter.name, value]));
		else if (parameter.name === 'q') {
			const terms = parameter.required ? world.stars : [...world.relations, ...world.calibratorSets].map((x) => x.slug);
			(parameter.required ? required : variants).push(...terms.map((term) => ['q', term]));
		} else if (parameter.required && parameter.name !== 'from' && parameter.name !== 'to') {
			throw new Error(`The crawl cannot fill the required query parameter ${parameter.name} of GET ${operationPath}`);
		}
	}
	return { required, variants };
}

const withQuery = (path: string, pairsOfQuery: string[]) => {
	if (pairsOfQuery.length === 0) return path;
	const query = new URLSearchParams();
	for (let i = 0; i < pairsOfQuery.length; i += 2) query.append(pairsOfQuery[i], pairsOfQuery[i + 1]);
	return `${path}?${query}`;
};

/** The same page's data endpoint (SvelteKit: `/a/b/__data.json`, the root's is `/__data.json`). */
export const dataPath = (path: string) => {
	const [pathname, query] = path.split('?');
	return `${pathname.replace(/\/$/, '')}/__data.json${query ? `?${query}` : ''}`;
};

export function crawlTargets(world: CrawlWorld, document: OpenApiDocument): CrawlTarget[] {
	const targets: CrawlTarget[] = [];
	for (const rule of crawledRows()) {
		const page = isPage(rule.route);
		const operationPath = rule.route.replace(/\[(\w+)\]/g, '{$1}');
		for (const { path, params } of expandRoute(world, rule.route)) {
			const { required, variants } = openApiQueryVariants(world, document, operationPath, params);
			const code = codeQueryVariants(world, rule.route, params);
			const bases = required.length > 0 ? required : [[]];
			const queries = [...bases, ...bases.flatMap((base) => [...variants, ...code].map((v) => [...base, ...v]))];
			for (const query of queries) {
				const full = withQuery(path, query);
				targets.push({ row: rowLabel(rule), path: full, page, data: false });
				if (page) targets.push({ row: rowLabel(rule), path: dataPath(full), page, data: true });
			}
		}
	}
	return targets;
}
