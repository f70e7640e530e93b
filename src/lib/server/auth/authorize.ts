// Decides whether a principal may use a route, from the permission table.
import type { Access } from './permissions';
import type { Principal } from './principal';

export type Decision =
	| { ok: true }
	| { ok: false; reason: 'unauthenticated' }
	| { ok: false; reason: 'insufficient_scope'; scope: string }
	| { ok: false; reason: 'forbidden_role' };

export function decide(rule: Access, principal: Principal | null): Decision {
	switch (rule.kind) {
		case 'public':
			return { ok: true };
		case 'signed-in':
			return principal ? { ok: true } : { ok: false, reason: 'unauthenticated' };
		case 'scope':
			if (!principal) return { ok: false, reason: 'unauthenticated' };
			return principal.scopes.includes(rule.scope) ? { ok: true } : { ok: false, reason: 'insufficient_scope', scope: rule.scope };
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
