import type { Role } from '../src/lib/server/entities/index';

/**
 * Invented demo people (the `.invalid` domain can never receive mail). Shared by the seeder and the
 * README; the password is for the local demo only.
 */
export const DEMO_PASSWORD = 'candlebook-demo';

export const DEMO_ACCOUNTS: ReadonlyArray<{ email: string; displayName: string; affiliation: string; roles: Role[] }> =
	[
		{
			email: 'imre.vasko@demo.candlebook.invalid',
			displayName: 'Imre Vasko',
			affiliation: 'Tamsin Ridge Observatory (invented)',
			roles: ['reader', 'curator']
		},
		{
			email: 'oluwaseun.brandt@demo.candlebook.invalid',
			displayName: 'Oluwaseun Brandt',
			affiliation: 'Institute for Pulsating Stars (invented)',
			roles: ['reader', 'reviewer']
		},
		{
			email: 'mireille.achterberg@demo.candlebook.invalid',
			displayName: 'Mireille Achterberg',
			affiliation: 'Candlebook demo operations (invented)',
			roles: ['reader', 'admin']
		}
	];
