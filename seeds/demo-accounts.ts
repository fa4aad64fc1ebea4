import type { GroupStanding, Role } from '../src/lib/server/entities/index';

/**
 * Invented demo people (the `.invalid` domain can never receive mail). Shared by the seeder and the
 * README; the published password is for a demo on loopback only.
 */
export const DEMO_PASSWORD = 'candlebook-demo';

/**
 * `published`: every demo account signs in with DEMO_PASSWORD (a demo on loopback). `random`: each
 * gets a password of its own, shown once to whoever started the server (a demo others can reach).
 */
export type DemoPasswords = 'published' | 'random';

export interface DemoCredential {
	email: string;
	password: string;
}

export interface DemoAccount {
	email: string;
	displayName: string;
	affiliation: string;
	roles: Role[];
	/** Standing in the demo group, if any. */
	demoGroup?: GroupStanding;
}

export const DEMO_GROUP = {
	slug: 'kestrel-cepheid-survey',
	name: 'Kestrel Cepheid Survey (invented)',
	description: 'An invented survey team for the demo: it owns the demo relations and calibrator sets.'
};

export const DEMO_ACCOUNTS: ReadonlyArray<DemoAccount> = [
	{
		email: 'ngaio.marchetti@demo.candlebook.invalid',
		displayName: 'Ngaio Marchetti',
		affiliation: 'Ostrava Plains College (invented)',
		roles: ['reader']
	},
	{
		email: 'imre.vasko@demo.candlebook.invalid',
		displayName: 'Imre Vasko',
		affiliation: 'Tamsin Ridge Observatory (invented)',
		roles: ['reader', 'curator'],
		demoGroup: 'manager'
	},
	{
		email: 'oluwaseun.brandt@demo.candlebook.invalid',
		displayName: 'Oluwaseun Brandt',
		affiliation: 'Institute for Pulsating Stars (invented)',
		roles: ['reader', 'reviewer'],
		demoGroup: 'member'
	},
	{
		email: 'mireille.achterberg@demo.candlebook.invalid',
		displayName: 'Mireille Achterberg',
		affiliation: 'Candlebook demo operations (invented)',
		roles: ['reader', 'admin']
	}
];
