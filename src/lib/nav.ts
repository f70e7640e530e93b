// The navigation of each role. Areas appear here as they are built (no dead links).
import type { Role } from './domain/scopes';

export interface NavItem {
	href: string;
	label: string;
	roles: readonly Role[];
}

export const NAV: NavItem[] = [
	{ href: '/', label: 'Home', roles: ['admin', 'manager', 'district', 'researcher'] },
	{ href: '/methods', label: 'Methods', roles: ['admin', 'manager', 'district', 'researcher'] },
	{ href: '/batches', label: 'Batches', roles: ['district', 'manager', 'admin'] },
	{ href: '/records', label: 'Records', roles: ['district', 'manager', 'admin'] },
	{ href: '/admin/oauth-clients', label: 'OAuth clients', roles: ['admin'] },
	{ href: '/admin/outbox', label: 'Outbox', roles: ['admin'] },
	{ href: '/dashboard', label: 'Dashboard', roles: ['admin', 'manager', 'district'] }
];

export function navFor(role: Role | null): NavItem[] {
	return role ? NAV.filter((i) => i.roles.includes(role)) : [];
}
