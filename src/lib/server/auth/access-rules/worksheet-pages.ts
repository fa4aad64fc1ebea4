import type { AccessRule } from '../access-rule';

/** The distance and H0 worksheet and the light-curve pages. */
export const WORKSHEET_PAGE_RULES: readonly AccessRule[] = [];
