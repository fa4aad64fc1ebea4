import type { Pathname } from '$app/types';

/** Paths of pages (API paths are never navigation targets, and would overflow `resolve`'s overloads). */
export type PagePath = Exclude<Pathname, `/api/${string}`>;

/** The pages the header links to; a page that does not exist is a type error here. */
export type SectionPath = Extract<
	PagePath,
	| '/'
	| '/relations'
	| '/calibrator-sets'
	| '/worksheet'
	| '/docs/api'
	| '/review'
	| '/light-curves'
	| '/sign-in'
	| '/account'
	| '/admin'
>;

/** Primary navigation. Only pages that exist are listed; each capability adds its own entry. */
export interface NavigationItem {
	href: SectionPath;
	label: string;
}

export const PRIMARY_NAVIGATION: NavigationItem[] = [
	{ href: '/', label: 'Overview' },
	{ href: '/relations', label: 'Relations' },
	{ href: '/calibrator-sets', label: 'Calibrator sets' },
	{ href: '/worksheet', label: 'Worksheet' },
	{ href: '/docs/api', label: 'API' }
];

/** Sections that only make sense signed in: the review queue and one's own light-curve uploads. */
export const SIGNED_IN_NAVIGATION: NavigationItem[] = [
	{ href: '/review', label: 'Review' },
	{ href: '/light-curves', label: 'Light curves' }
];

export function primaryNavigation(viewer: Viewer | null): NavigationItem[] {
	if (!viewer) return PRIMARY_NAVIGATION;
	return [...PRIMARY_NAVIGATION.slice(0, -1), ...SIGNED_IN_NAVIGATION, ...PRIMARY_NAVIGATION.slice(-1)];
}

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
