/**
 * The catalogue's filter, as it travels in the page URL and in the relations API query. One parser
 * for the server load, the client and the API call, so all three read a URL the same way.
 */
import { POPULATION_IDS, type PopulationId } from '../calibration/types';
import { SINGLE_BAND_IDS, WESENHEIT_BAND_IDS } from '../calibration/bands';

export const ANCHOR_TYPE_IDS = ['parallax', 'geometric_host', 'cluster'] as const;
export type AnchorTypeId = (typeof ANCHOR_TYPE_IDS)[number];
export const RELATION_STATES = ['active', 'proposed', 'retired'] as const;
export type RelationState = (typeof RELATION_STATES)[number];
export const CATALOGUE_SORTS = ['title', '-title', 'band', 'updated', '-updated'] as const;
export type CatalogueSort = (typeof CATALOGUE_SORTS)[number];
export const BAND_IDS: readonly string[] = [...WESENHEIT_BAND_IDS, ...SINGLE_BAND_IDS];
export const DEFAULT_PAGE_SIZE = 50;
export const MAX_PAGE_SIZE = 200;
export const MAX_QUERY_LENGTH = 100;

export interface CatalogueFilter {
	band: string | null;
	population: PopulationId | null;
	anchor: AnchorTypeId | null;
	state: RelationState | null;
	q: string;
	sort: CatalogueSort;
	cursor: string | null;
	limit: number;
}

export const EMPTY_FILTER: CatalogueFilter = {
	band: null,
	population: null,
	anchor: null,
	state: null,
	q: '',
	sort: '-updated',
	cursor: null,
	limit: DEFAULT_PAGE_SIZE
};

const oneOf = <T extends string>(values: readonly T[], value: string | null): T | null =>
	value !== null && (values as readonly string[]).includes(value) ? (value as T) : null;

/** Unknown values are dropped rather than refused: a stale bookmark still opens the catalogue. */
export function parseCatalogueFilter(params: URLSearchParams): CatalogueFilter {
	const limit = Number(params.get('limit'));
	return {
		band: oneOf(BAND_IDS, params.get('band')),
		population: oneOf(POPULATION_IDS, params.get('population')),
		anchor: oneOf(ANCHOR_TYPE_IDS, params.get('anchor')),
		state: oneOf(RELATION_STATES, params.get('state')),
		q: (params.get('q') ?? '').trim().slice(0, MAX_QUERY_LENGTH),
		sort: oneOf(CATALOGUE_SORTS, params.get('sort')) ?? EMPTY_FILTER.sort,
		cursor: params.get('cursor') || null,
		limit: Number.isInteger(limit) && limit > 0 ? Math.min(limit, MAX_PAGE_SIZE) : DEFAULT_PAGE_SIZE
	};
}

/** The filter as query parameters, leaving out defaults so URLs stay short and stable. */
export function catalogueSearchParams(filter: CatalogueFilter): URLSearchParams {
	const params = new URLSearchParams();
	if (filter.band) params.set('band', filter.band);
	if (filter.population) params.set('population', filter.population);
	if (filter.anchor) params.set('anchor', filter.anchor);
	if (filter.state) params.set('state', filter.state);
	if (filter.q) params.set('q', filter.q);
	if (filter.sort !== EMPTY_FILTER.sort) params.set('sort', filter.sort);
	if (filter.cursor) params.set('cursor', filter.cursor);
	if (filter.limit !== DEFAULT_PAGE_SIZE) params.set('limit', String(filter.limit));
	return params;
}

/** One catalogue row, as the relations API lists it. */
export interface CatalogueItem {
	slug: string;
	title: string;
	band: string;
	population: PopulationId;
	magnitude_system: 'Vega' | 'AB';
	anchor_type: AnchorTypeId;
	group: string;
	visibility: 'public' | 'group';
	state: RelationState;
	current: { version: number; ref: string; digest: string } | null;
	version_count: number;
	updated_at: string;
}

export interface CataloguePage {
	items: CatalogueItem[];
	next_cursor: string | null;
}
