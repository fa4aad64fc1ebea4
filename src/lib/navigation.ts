import type { Pathname } from '$app/types';

/** Paths of pages (API paths are never navigation targets, and would overflow `resolve`'s overloads). */
export type PagePath = Exclude<Pathname, `/api/${string}`>;

/** Primary navigation. Only pages that exist are listed; each capability adds its own entry. */
export interface NavigationItem {
	href: PagePath;
	label: string;
}

export const PRIMARY_NAVIGATION: NavigationItem[] = [
	{ href: '/', label: 'Overview' },
	{ href: '/relations', label: 'Relations' },
	{ href: '/docs/api', label: 'API' }
];

/** An entry is current on its own page and on the pages below it (the overview only on itself). */
export function isCurrentSection(href: string, pathname: string): boolean {
	return href === '/' ? pathname === '/' : pathname === href || pathname.startsWith(`${href}/`);
}

export interface Viewer {
	displayName: string;
	isAdmin: boolean;
}

/** The account corner of the header: sign-in for visitors, account (and administration) otherwise. */
export function accountNavigation(viewer: Viewer | null): NavigationItem[] {
	if (!viewer) return [{ href: '/sign-in', label: 'Sign in' }];
	const items: NavigationItem[] = [{ href: '/account', label: 'Account' }];
	if (viewer.isAdmin) items.push({ href: '/admin', label: 'Administration' });
	return items;
}
