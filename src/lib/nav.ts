// The navigation of each role. Areas appear here as they are built (no dead links).
import type { Role } from './domain/scopes';

export interface NavItem {
	href: string;
	label: string;
	roles: readonly Role[];
}

export const NAV: NavItem[] = [
	{ href: '/', label: 'Home', roles: ['admin', 'manager', 'district', 'researcher'] },
	{ href: '/dashboard', label: 'Dashboard', roles: ['admin', 'manager', 'district'] },
	{ href: '/batches', label: 'Batches', roles: ['district', 'manager', 'admin'] },
	{ href: '/records', label: 'Records', roles: ['district', 'manager', 'admin'] },
	{ href: '/methods', label: 'Methods', roles: ['admin', 'manager', 'district', 'researcher'] },
	{ href: '/reviews', label: 'Reviews', roles: ['manager', 'admin'] },
	{ href: '/verification', label: 'Field visits', roles: ['manager', 'admin', 'district'] },
	{ href: '/schema', label: 'Record schema', roles: ['admin', 'manager', 'district'] },
	{ href: '/dataset', label: 'Research dataset', roles: ['researcher', 'manager', 'admin'] },
	// administration; everyone's own account page is linked from the header, beside their name
	{ href: '/admin/users', label: 'Users', roles: ['admin'] },
	{ href: '/admin/districts', label: 'Districts', roles: ['admin'] },
	{ href: '/admin/tokens', label: 'API tokens', roles: ['admin'] },
	{ href: '/admin/oauth-clients', label: 'OAuth clients', roles: ['admin'] },
	{ href: '/admin/outbox', label: 'Outbox', roles: ['admin'] },
	{ href: '/admin/audit', label: 'Audit log', roles: ['admin'] }
];

export function navFor(role: Role | null): NavItem[] {
	return role ? NAV.filter((i) => i.roles.includes(role)) : [];
}
