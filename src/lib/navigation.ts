import type { Pathname } from '$app/types';
import { mayAccess, routeAccess } from './access';
import type { Role } from './roles';

/** The main navigation, in Countersign's own words (GLOSSARY.md; DEVELOPERS.md, "Words"). */
/** Static pages only (TypeScript checks resolve() over a union of at most 25 paths). */
type NavHref = Extract<
	Pathname,
	| '/'
	| '/work'
	| '/pm'
	| '/plant'
	| '/procedures'
	| '/instruments'
	| '/parts'
	| '/qualifications'
	| '/audit'
	| '/people'
	| '/access-review'
>;
export type NavItem = { href: NavHref; label: string; route: keyof typeof routeAccess };

const items: NavItem[] = [
	{ href: '/', label: 'Waiting for me', route: '/(app)' },
	{ href: '/work', label: 'Work', route: '/(app)/work' },
	{ href: '/pm', label: 'PM schedules', route: '/(app)/pm' },
	{ href: '/plant', label: 'Plant', route: '/(app)/plant' },
	{ href: '/procedures', label: 'Procedures', route: '/(app)/procedures' },
	{ href: '/instruments', label: 'Instruments', route: '/(app)/instruments' },
	{ href: '/parts', label: 'Parts and lots', route: '/(app)/parts' },
	{ href: '/qualifications', label: 'Qualifications', route: '/(app)/qualifications' },
	{ href: '/audit', label: 'Audit trail', route: '/(app)/audit' },
	{ href: '/people', label: 'People and access', route: '/(app)/people' },
	{ href: '/access-review', label: 'Access review', route: '/(app)/access-review' }
];

/** Only what the person's roles may open (the server enforces the same table). */
export function navFor(roles: readonly Role[]): NavItem[] {
	return items.filter((item) => mayAccess(routeAccess[item.route], roles, true));
}
