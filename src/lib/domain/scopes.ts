// Roles and API scopes (product brief, "Roles and scopes"). Pure data, shared by server, UI and CLI.
export const ROLES = ['admin', 'manager', 'district', 'researcher'] as const;
export type Role = (typeof ROLES)[number];

export const SCOPES = ['records:write', 'records:read', 'rollups:read', 'dataset:read', 'admin'] as const;
export type Scope = (typeof SCOPES)[number];

/** The scopes each role may hold; a token's scopes are a subset of its owner's role scopes. */
export const ROLE_SCOPES: Record<Role, readonly Scope[]> = {
	admin: SCOPES,
	manager: ['records:read', 'rollups:read', 'dataset:read'],
	district: ['records:write', 'records:read', 'rollups:read'],
	researcher: ['dataset:read', 'rollups:read']
};

export const ROLE_LABELS: Record<Role, string> = {
	admin: 'State administrator',
	manager: 'State program manager',
	district: 'District staff',
	researcher: 'Partner researcher'
};

export function isScope(s: string): s is Scope {
	return (SCOPES as readonly string[]).includes(s);
}

/** Scopes a role may grant, intersected with the requested ones; unknown or foreign scopes are reported. */
export function checkRequestedScopes(role: Role, requested: string[]): { ok: Scope[]; refused: string[] } {
	const allowed = ROLE_SCOPES[role];
	const ok: Scope[] = [];
	const refused: string[] = [];
	for (const s of requested) {
		if (isScope(s) && allowed.includes(s)) {
			if (!ok.includes(s)) ok.push(s);
		} else refused.push(s);
	}
	return { ok, refused };
}
