import type { AccessRule } from '../access-rule';

/** The public read API: relations, versions, digests, calibrator sets, stars, distances, citations, feeds, export. */
export const READ_API_RULES: readonly AccessRule[] = [];
