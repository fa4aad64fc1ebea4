import type { EntityManager } from '@mikro-orm/postgresql';
import type { CatalogueFilter, CatalogueItem, CataloguePage, CatalogueSort } from '../../catalogue/filters';
import { GroupMembership } from '../entities/index';
import { isAdmin, type Actor } from '../registry/actor';

/**
 * The catalogue list: relations the viewer may see, with their current version, filtered, sorted and
 * paged by an opaque cursor. The same shape as `GET /api/v1/relations`, so the first page can be
 * rendered on the server and the client can take over from the API.
 *
 * A relation is `active` while one of its visible versions is current, `retired` when every visible
 * version is deprecated, and `proposed` before it has any version the viewer may see.
 */
const ORDER: Record<CatalogueSort, string> = {
	title: 'r.title asc, r.slug asc',
	'-title': 'r.title desc, r.slug desc',
	band: 'r.band asc, r.title asc, r.slug asc',
	updated: 'updated_at asc, r.slug asc',
	'-updated': 'updated_at desc, r.slug asc'
};

/** The cursor is the offset of the next page; opaque to callers, checked here. */
export function decodeCursor(cursor: string | null): number {
	if (!cursor || !/^o[1-9]\d{0,8}$/.test(cursor)) return 0;
	return Number(cursor.slice(1));
}

const encodeCursor = (offset: number) => `o${offset}`;

async function memberGroupIds(em: EntityManager, actor: Actor | null): Promise<string[] | 'all'> {
	if (!actor) return [];
	if (isAdmin(actor)) return 'all';
	const memberships = await em.find(GroupMembership, { user: actor.id }, { fields: ['group'] });
	return memberships.map((membership) => membership.group.id);
}

interface Row {
	slug: string;
	title: string;
	band: string;
	population: CatalogueItem['population'];
	magnitude_system: CatalogueItem['magnitude_system'];
	anchor_type: CatalogueItem['anchor_type'];
	group_slug: string;
	visibility: CatalogueItem['visibility'];
	version_count: string | number;
	current_number: number | null;
	current_digest: string | null;
	updated_at: Date | string;
	state: CatalogueItem['state'];
}

export async function listCatalogue(
	em: EntityManager,
	actor: Actor | null,
	filter: CatalogueFilter
): Promise<CataloguePage> {
	const groups = await memberGroupIds(em, actor);
	const params: unknown[] = [];
	const memberOf = (column: string) => {
		if (groups === 'all') return 'true';
		if (groups.length === 0) return 'false';
		params.push(...groups);
		return `${column} in (${groups.map(() => '?').join(', ')})`;
	};
	// Embargoed versions count only for members of the owning group.
	const visibleVersions = `select l.relation_id, l.number, l.status, l.updated_at, v.digest
		from app_version_lifecycle l join app_relation_version v on v.id = l.id
		join app_relation rr on rr.id = l.relation_id
		where l.embargo_until is null or l.released_at is not null or l.embargo_until <= now() or ${memberOf('rr.group_id')}`;
	const where = [`(r.visibility = 'public' or ${memberOf('r.group_id')})`];
	const equal = (column: string, value: string | null) => {
		if (value === null) return;
		where.push(`${column} = ?`);
		params.push(value);
	};
	equal('r.band', filter.band);
	equal('r.population', filter.population);
	equal('r.anchor_type', filter.anchor);
	if (filter.q) {
		where.push(`(r.title ilike ? or r.slug ilike ?)`);
		const pattern = `%${filter.q.replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
		params.push(pattern, pattern);
	}
	const stateFilter = filter.state ? 'where state = ?' : '';
	if (filter.state) params.push(filter.state);
	const offset = decodeCursor(filter.cursor);
	params.push(filter.limit + 1, offset);
	const sql = `with vv as (${visibleVersions}),
		listed as (
			select r.slug, r.title, r.band, r.population, r.magnitude_system, r.anchor_type, g.slug as group_slug,
				r.visibility, r.created_at,
				(select count(*) from vv where vv.relation_id = r.id) as version_count,
				cur.number as current_number, cur.digest as current_digest,
				greatest(r.created_at, (select max(vv.updated_at) from vv where vv.relation_id = r.id)) as updated_at,
				case
					when not exists (select 1 from vv where vv.relation_id = r.id) then 'proposed'
					when cur.number is null then 'retired'
					else 'active'
				end as state
			from app_relation r
			join app_group g on g.id = r.group_id
			left join lateral (
				select vv.number, vv.digest from vv
				where vv.relation_id = r.id and vv.status = 'current'
				order by vv.number desc limit 1
			) cur on true
			where ${where.join(' and ')}
		)
		select * from listed r ${stateFilter}
		order by ${ORDER[filter.sort]}
		limit ? offset ?`;
	const rows = (await em.getConnection().execute(sql, params)) as Row[];
	const page = rows.slice(0, filter.limit);
	return {
		items: page.map((row): CatalogueItem => ({
			slug: row.slug,
			title: row.title,
			band: row.band,
			population: row.population,
			magnitude_system: row.magnitude_system,
			anchor_type: row.anchor_type,
			group: row.group_slug,
			visibility: row.visibility,
			state: row.state,
			current:
				row.current_number === null
					? null
					: { version: row.current_number, ref: `${row.slug}@${row.current_number}`, digest: row.current_digest! },
			version_count: Number(row.version_count),
			updated_at: new Date(row.updated_at).toISOString()
		})),
		next_cursor: rows.length > filter.limit ? encodeCursor(offset + filter.limit) : null
	};
}
