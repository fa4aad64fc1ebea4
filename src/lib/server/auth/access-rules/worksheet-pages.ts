import { anyone, type AccessRule } from '../access-rule';

/** The distance and H0 worksheet and the light-curve pages. */
export const WORKSHEET_PAGE_RULES: readonly AccessRule[] = [
	{
		route: '/api/v1/distances',
		method: 'POST',
		audience: anyone,
		tokenScope: 'any',
		summary: "a pinned relation applied to a host galaxy's Cepheids (private versions: 404 unless visible)"
	}
];
