// Decides whether a principal may use a route, from the permission table.
import type { Access } from './permissions';
import type { Principal } from './principal';

export type Decision =
	| { ok: true }
	| { ok: false; reason: 'unauthenticated' }
	| { ok: false; reason: 'insufficient_scope'; scope: string }
	| { ok: false; reason: 'forbidden_role' }
	| { ok: false; reason: 'other_district' };

export function decide(rule: Access, principal: Principal | null): Decision {
	switch (rule.kind) {
		case 'public':
			return { ok: true };
		case 'signed-in':
			return principal ? { ok: true } : { ok: false, reason: 'unauthenticated' };
		case 'scope':
			if (!principal) return { ok: false, reason: 'unauthenticated' };
			if (!principal.scopes.includes(rule.scope)) return { ok: false, reason: 'insufficient_scope', scope: rule.scope };
			return !rule.roles || rule.roles.includes(principal.role) ? { ok: true } : { ok: false, reason: 'forbidden_role' };
		case 'any-scope':
			if (!principal) return { ok: false, reason: 'unauthenticated' };
			return rule.scopes.some((s) => principal.scopes.includes(s))
				? { ok: true }
				: { ok: false, reason: 'insufficient_scope', scope: rule.scopes.join(' ') };
		case 'roles':
			if (!principal) return { ok: false, reason: 'unauthenticated' };
			return rule.roles.includes(principal.role) ? { ok: true } : { ok: false, reason: 'forbidden_role' };
	}
}

/**
 * For a route whose path names a district (`rule.districtParam`): a principal bound to a district may
 * only use its own. `paramDistrictId` is the id of the district the path names (null: no such district).
 */
export function decideDistrict(rule: Access, principal: Principal | null, paramDistrictId: number | null): Decision {
	if (!rule.districtParam || !principal || principal.districtId === null) return { ok: true };
	return paramDistrictId === principal.districtId ? { ok: true } : { ok: false, reason: 'other_district' };
}
