import type { AccessRule } from '../access-rule';

/** The review desk and the administration settings. */
export const REVIEW_PAGE_RULES: readonly AccessRule[] = [];
