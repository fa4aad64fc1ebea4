import type { AccessRule } from '../access-rule';

/** Calibrator set pages, the upload wizard, and refit and propose. */
export const CALIBRATOR_PAGE_RULES: readonly AccessRule[] = [];
