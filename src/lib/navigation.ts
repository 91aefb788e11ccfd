import type { Pathname } from '$app/types';

/** The main navigation, in Countersign's own words (see DEVELOPERS.md, "Words"). */
export type NavItem = { href: Pathname; label: string };

/** Only pages that exist are listed; 2/10 filters them by the person's roles. */
export const mainNav: NavItem[] = [
	{ href: '/', label: 'Waiting for me' },
	{ href: '/plant', label: 'Plant' }
];
