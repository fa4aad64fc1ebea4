import type { AccessRule } from '../access-rule';

/** Light-curve uploads and analyses over the API. */
export const LIGHT_CURVE_API_RULES: readonly AccessRule[] = [];
