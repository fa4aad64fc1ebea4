import type { LayoutServerLoad } from './$types';

/** Only what the header needs; no database work. */
export const load: LayoutServerLoad = ({ locals }) => ({
	viewer: locals.user ? { displayName: locals.user.displayName, isAdmin: locals.user.roles.includes('admin') } : null
});
