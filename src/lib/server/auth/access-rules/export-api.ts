import { anyone, type AccessRule } from '../access-rule';

/**
 * Calibrator-set reads and exports and the deposit archive. Anyone may read; a set private to its
 * group is checked by the reads themselves (404 to those who may not see it), so a token sees one only
 * with the read:private scope.
 */
export const EXPORT_API_RULES: readonly AccessRule[] = [
	{
		route: '/api/v1/calibrator-sets',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'list the calibrator sets the caller may see'
	},
	{
		route: '/api/v1/calibrator-sets/[slug]',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'a calibrator set with every revision'
	},
	{
		route: '/api/v1/calibrator-sets/[slug]/revisions/[n]',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'one calibrator revision as JSON, CSV or VOTable'
	},
	{
		route: '/api/v1/calibrator-sets/[slug]/revisions/[n]/light-curves',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'the light-curve analyses a revision took values from'
	},
	{
		route: '/api/v1/export',
		method: 'GET',
		audience: anyone,
		tokenScope: 'any',
		summary: 'zip archive of every public frozen version and calibrator revision'
	}
];
