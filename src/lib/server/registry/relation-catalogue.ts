import type { EntityManager } from '@mikro-orm/postgresql';
import type { PopulationId } from '../../calibration/index';
import type { AnchorType, RelationVisibility } from '../entities/relation.entity';
import type { VersionStatus } from '../entities/version-lifecycle.entity';
import type { Actor } from './actor';
import { notFound } from './errors';
import { relationState, standingsFor, viewerOf, type RelationState, type Viewer } from './version-standing';

/**
 * The relation catalogue: every relation the viewer may see, with its state and current version, in one
 * SQL statement per page (lateral joins, no query per row), filtered, sorted and paged by keyset.
 */
export const CATALOGUE_SORTS = ['title', '-title', 'band', 'updated', '-updated'] as const;
export type CatalogueSort = (typeof CATALOGUE_SORTS)[number];

export interface CatalogueQuery {
	band?: string;
	population?: PopulationId;
	anchor?: AnchorType;
	state?: RelationState;
	q?: string;
	sort: CatalogueSort;
	/** The sort key values of the last row of the previous page. */
	after: string[] | null;
	limit: number;
	/** One relation only (the detail view uses the same statement, so both always agree). */
	slug?: string;
}

export interface CatalogueRow {
	slug: string;
	title: string;
	description: string;
	band: string;
	population: PopulationId;
	magnitudeSystem: 'Vega' | 'AB';
	anchorType: AnchorType;
	group: string;
	visibility: RelationVisibility;
	state: RelationState;
	current: { version: number; digest: string } | null;
	versionCount: number;
	updatedAt: Date;
}

export interface CataloguePage {
	rows: CatalogueRow[];
	/** Sort key values of the last row when another page follows, else null. */
	nextAfter: string[] | null;
}

/** Whether the viewer may see version `l` of relation `r` (needs VIEWER_LATERAL) (embargoes end by date or by release). */
export const VISIBLE_VERSION = `(l.embargo_until is null or l.released_at is not null or l.embargo_until <= now() or viewer.member)`;

/** Admins, and members of the owning group, see its private relations and embargoed versions. */
/** `viewer.member`: the caller is an admin or in the group of `groupColumn` (parameters: viewerParams). */
export const viewerLateral = (groupColumn: string) => `cross join lateral (
	select (cast(? as boolean) or exists (
		select 1 from app_group_membership m where m.group_id = ${groupColumn} and m.user_id = cast(? as uuid)
	)) as member
) viewer`;

export const VIEWER_LATERAL = viewerLateral('r.group_id');

export const viewerParams = (viewer: Viewer) => [viewer.admin, viewer.userId];

const SORT_KEYS: Record<CatalogueSort, { columns: string[]; descending: boolean }> = {
	title: { columns: ['x.title_key', 'x.slug'], descending: false },
	'-title': { columns: ['x.title_key', 'x.slug'], descending: true },
	band: { columns: ['x.band', 'x.title_key', 'x.slug'], descending: false },
	updated: { columns: ['x.updated_at', 'x.slug'], descending: false },
	'-updated': { columns: ['x.updated_at', 'x.slug'], descending: true }
};

/** The key values a cursor records for a row, as text (timestamps to the microsecond). */
const KEY_SELECT: Record<string, string> = {
	'x.title_key': 'x.title_key',
	'x.slug': 'x.slug',
	'x.band': 'x.band',
	'x.updated_at': `to_char(x.updated_at at time zone 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`
};
const KEY_CAST: Record<string, string> = { 'x.updated_at': 'cast(? as timestamptz)' };

const likePattern = (text: string) => `%${text.replace(/[\\%_]/g, '\\$&')}%`;

interface RawRow {
	slug: string;
	title: string;
	description: string;
	band: string;
	population: PopulationId;
	magnitude_system: 'Vega' | 'AB';
	anchor_type: AnchorType;
	group_slug: string;
	visibility: RelationVisibility;
	version_count: number;
	current_number: number | null;
	current_digest: string | null;
	updated_at: Date | string;
	cursor_keys: string[];
}

export async function listRelations(
	em: EntityManager,
	actor: Actor | null,
	query: CatalogueQuery
): Promise<CataloguePage> {
	const viewer = viewerOf(actor);
	const { columns, descending } = SORT_KEYS[query.sort];
	const where: string[] = [];
	const params: unknown[] = [...viewerParams(viewer)];
	const filter = (sql: string, ...values: unknown[]) => {
		where.push(sql);
		params.push(...values);
	};
	if (query.slug !== undefined) filter('x.slug = ?', query.slug);
	if (query.band !== undefined) filter('x.band = ?', query.band);
	if (query.population !== undefined) filter('x.population = ?', query.population);
	if (query.anchor !== undefined) filter('x.anchor_type = ?', query.anchor);
	if (query.state !== undefined) filter('x.state = ?', query.state);
	if (query.q !== undefined) {
		const pattern = likePattern(query.q);
		filter('(x.slug ilike ? or x.title ilike ? or x.description ilike ?)', pattern, pattern, pattern);
	}
	if (query.after) {
		const placeholders = columns.map((column) => KEY_CAST[column] ?? '?').join(', ');
		filter(`(${columns.join(', ')}) ${descending ? '<' : '>'} (${placeholders})`, ...query.after);
	}
	const direction = descending ? 'desc' : 'asc';
	const sql = `
select x.*, array[${columns.map((column) => `${KEY_SELECT[column]}::text`).join(', ')}] as cursor_keys
from (
	select r.slug, r.title, lower(r.title) as title_key, r.description, r.band, r.population, r.magnitude_system,
		r.anchor_type, g.slug as group_slug, r.visibility,
		coalesce(agg.version_count, 0)::int as version_count,
		cur.number as current_number, cur.digest as current_digest,
		case when cur.number is not null then 'active' when coalesce(agg.version_count, 0) = 0 then 'proposed' else 'retired' end as state,
		coalesce(agg.last_event, r.created_at) as updated_at
	from app_relation r
	join app_group g on g.id = r.group_id
	${VIEWER_LATERAL}
	left join lateral (
		select count(*) as version_count,
			max(greatest(cast(v.content->>'approved_at' as timestamptz), l.deprecated_at)) as last_event
		from app_version_lifecycle l join app_relation_version v on v.id = l.id
		where l.relation_id = r.id and ${VISIBLE_VERSION}
	) agg on true
	left join lateral (
		select l.number, v.digest
		from app_version_lifecycle l join app_relation_version v on v.id = l.id
		where l.relation_id = r.id and l.status <> 'deprecated' and ${VISIBLE_VERSION}
		order by l.number desc limit 1
	) cur on true
	where r.visibility = 'public' or viewer.member
) x
${where.length ? `where ${where.join(' and ')}` : ''}
order by ${columns.map((column) => `${column} ${direction}`).join(', ')}
limit ?`;
	params.push(query.limit + 1);
	const raw = (await em.getConnection().execute(sql, params)) as RawRow[];
	const rows = raw.slice(0, query.limit).map(toRow);
	const more = raw.length > query.limit;
	return { rows, nextAfter: more ? raw[query.limit - 1].cursor_keys : null };
}

function toRow(row: RawRow): CatalogueRow {
	return {
		slug: row.slug,
		title: row.title,
		description: row.description,
		band: row.band,
		population: row.population,
		magnitudeSystem: row.magnitude_system,
		anchorType: row.anchor_type,
		group: row.group_slug,
		visibility: row.visibility,
		state: relationState(row.version_count, row.current_number !== null),
		current: row.current_number !== null ? { version: row.current_number, digest: row.current_digest as string } : null,
		versionCount: row.version_count,
		updatedAt: new Date(row.updated_at)
	};
}

export interface VersionSummary {
	number: number;
	lifecycle: VersionStatus;
	digest: string;
	approvedAt: string;
	deprecatedAt: Date | null;
	deprecationReason: string | null;
	/** The successor's number, or null (also when the viewer may not see it). */
	successor: number | null;
	embargoUntil: Date | null;
	embargoed: boolean;
}

interface RawVersion {
	number: number;
	status: VersionStatus;
	digest: string;
	approved_at: string;
	deprecated_at: Date | null;
	deprecation_reason: string | null;
	successor_number: number | null;
	embargo_until: Date | null;
	embargoed: boolean;
}

/** The versions of a relation the viewer may see, oldest first, with their standing for that viewer. */
export async function visibleVersions(em: EntityManager, actor: Actor | null, slug: string): Promise<VersionSummary[]> {
	const raw = (await em.getConnection().execute(
		`select l.number, l.status, v.digest, v.content->>'approved_at' as approved_at, l.deprecated_at,
			l.deprecation_reason, l.successor_number, l.embargo_until,
			(l.embargo_until is not null and l.released_at is null and l.embargo_until > now()) as embargoed
		from app_version_lifecycle l
		join app_relation_version v on v.id = l.id
		join app_relation r on r.id = l.relation_id
		${VIEWER_LATERAL}
		where r.slug = ? and (r.visibility = 'public' or viewer.member) and ${VISIBLE_VERSION}
		order by l.number asc`,
		[...viewerParams(viewerOf(actor)), slug]
	)) as RawVersion[];
	const standings = standingsFor(raw);
	const visible = new Set(raw.map((row) => row.number));
	return raw.map((row) => ({
		number: row.number,
		lifecycle: standings.get(row.number)!,
		digest: row.digest,
		approvedAt: row.approved_at,
		deprecatedAt: row.deprecated_at ? new Date(row.deprecated_at) : null,
		deprecationReason: row.deprecation_reason,
		successor: row.successor_number !== null && visible.has(row.successor_number) ? row.successor_number : null,
		embargoUntil: row.embargo_until ? new Date(row.embargo_until) : null,
		embargoed: row.embargoed
	}));
}

export interface RelationDetail {
	relation: CatalogueRow;
	versions: VersionSummary[];
}

/** One relation with every version the viewer may see; 404 when it does not exist or is not visible. */
export async function relationDetail(em: EntityManager, actor: Actor | null, slug: string): Promise<RelationDetail> {
	const { rows } = await listRelations(em, actor, { slug, sort: 'title', after: null, limit: 1 });
	if (rows.length === 0) throw notFound(`relation called ${slug}`);
	return { relation: rows[0], versions: await visibleVersions(em, actor, slug) };
}

/** The viewer's current version of a relation, or 404 when none is current (or the relation is not visible). */
export async function currentVersionFor(em: EntityManager, actor: Actor | null, slug: string): Promise<number> {
	const { rows } = await listRelations(em, actor, { slug, sort: 'title', after: null, limit: 1 });
	if (rows.length === 0) throw notFound(`relation called ${slug}`);
	if (!rows[0].current) throw notFound(`current version of ${slug}`);
	return rows[0].current.version;
}

/** An opaque cursor: the sort it belongs to and the last row's key values, base64url-encoded JSON. */
export function encodeCursor(sort: CatalogueSort, keys: string[]): string {
	return Buffer.from(JSON.stringify({ s: sort, k: keys }), 'utf8').toString('base64url');
}

/** The key values of a cursor made for this sort, or null when it is not one. */
export function decodeCursor(sort: CatalogueSort, cursor: string): string[] | null {
	try {
		const decoded = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8')) as { s?: unknown; k?: unknown };
		const keys = decoded.k;
		const expected = SORT_KEYS[sort].columns.length;
		if (decoded.s !== sort || !Array.isArray(keys) || keys.length !== expected) return null;
		if (!keys.every((key) => typeof key === 'string' && key.length <= 400)) return null;
		if (sort.endsWith('updated') && Number.isNaN(Date.parse(keys[0] as string))) return null;
		return keys as string[];
	} catch {
		return null;
	}
}
