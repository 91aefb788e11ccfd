import type { Pathname } from '$app/types';
import { mayAccess, routeAccess } from './access';
import type { Role } from './roles';

/** The main navigation, in Countersign's own words (GLOSSARY.md; DEVELOPERS.md, "Words"). */
export type NavItem = { href: Pathname; label: string; route: keyof typeof routeAccess };

const items: NavItem[] = [
	{ href: '/', label: 'Waiting for me', route: '/(app)' },
	{ href: '/plant', label: 'Plant', route: '/(app)/plant' },
	{ href: '/audit', label: 'Audit trail', route: '/(app)/audit' },
	{ href: '/people', label: 'People and access', route: '/(app)/people' }
];

/** Only what the person's roles may open (the server enforces the same table). */
export function navFor(roles: readonly Role[]): NavItem[] {
	return items.filter((item) => mayAccess(routeAccess[item.route], roles, true));
}
