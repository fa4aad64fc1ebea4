import type { Pathname } from '$app/types';

/** Primary navigation. Only pages that exist are listed; each capability adds its own entry. */
export interface NavigationItem {
	href: Pathname;
	label: string;
}

export const PRIMARY_NAVIGATION: NavigationItem[] = [{ href: '/', label: 'Overview' }];
