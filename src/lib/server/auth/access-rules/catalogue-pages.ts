import type { AccessRule } from '../access-rule';

/** The relation catalogue, relation and version pages, and the API docs page. */
export const CATALOGUE_PAGE_RULES: readonly AccessRule[] = [];
