// The one route-permission table. Every SvelteKit route id (pages and /api/v1 endpoints) has an
// entry per method it answers; hooks.server.ts enforces it before any route code runs, and
// tests/api/authz-matrix.test.ts walks it against every route file, so a new route cannot skip it.
//
// Pages: GET is the page view (its load), POST its form actions. District-only-own-data rules are
// enforced in the queries (a district principal always filters by its own district); a route whose
// path names a district (`…/districts/[code]/…`) says so with `ownDistrict(rule, 'code')`, and the
// hooks refuse a principal bound to another district before the route runs.
//
// Pages that change things for admins use the `admin` scope rather than the role, so an admin's
// token created without the `admin` scope cannot reach them either.
import type { Role, Scope } from '$lib/domain/scopes';

export type Access = (
	| { kind: 'public' }
	| { kind: 'signed-in' }
	| { kind: 'scope'; scope: Scope; /** and, when set, one of these roles (checked after the scope) */ roles?: Role[] }
	| { kind: 'any-scope'; scopes: Scope[] }
	| { kind: 'roles'; roles: Role[] }
) & {
	/** Route parameter holding a district code: a principal bound to a district may only use its own. */
	districtParam?: string;
};

export type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
export type RouteRules = Partial<Record<Method, Access>>;

const publicAccess: Access = { kind: 'public' };
const signedIn: Access = { kind: 'signed-in' };
const scope = (s: Scope): Access => ({ kind: 'scope', scope: s });
/** The scope, held by one of these roles (e.g. publishing a dataset release: `dataset:read` of a manager). */
const scopeForRoles = (s: Scope, ...r: Role[]): Access => ({ kind: 'scope', scope: s, roles: r });
const roles = (...r: Role[]): Access => ({ kind: 'roles', roles: r });
/** Any one of these scopes will do. */
const anyScope = (...s: Scope[]): Access => ({ kind: 'any-scope', scopes: s });
const ownDistrict = (a: Access, param: string): Access => ({ ...a, districtParam: param });
const adminOnly = scope('admin');

export const PERMISSIONS: Record<string, RouteRules> = {
	// --- pages ---
	'/': { GET: publicAccess },
	'/.well-known/jwks.json': { GET: publicAccess },

	// accounts
	'/sign-in': { GET: publicAccess, POST: publicAccess },
	'/sign-out': { POST: publicAccess },
	'/forgot-password': { GET: publicAccess, POST: publicAccess },
	'/reset-password/[token]': { GET: publicAccess, POST: publicAccess },
	'/accept-invitation/[token]': { GET: publicAccess, POST: publicAccess },
	'/account': { GET: signedIn, POST: signedIn },
	'/admin/users': { GET: adminOnly, POST: adminOnly },
	'/admin/users/[id]': { GET: adminOnly, POST: adminOnly },
	'/admin/districts': { GET: adminOnly, POST: adminOnly },
	'/admin/districts/[id]': { GET: adminOnly, POST: adminOnly },
	'/admin/tokens': { GET: adminOnly, POST: adminOnly },
	'/admin/audit': { GET: adminOnly },
	'/admin/outbox': { GET: adminOnly },
	'/admin/outbox/[id]': { GET: adminOnly, POST: adminOnly },
	'/admin/oauth-clients': { GET: adminOnly, POST: adminOnly },

	// reduction methods
	'/methods': { GET: signedIn, POST: adminOnly },
	'/methods/new': { GET: adminOnly, POST: adminOnly },
	'/batches': { GET: roles('district', 'manager', 'admin') },
	'/batches/[id]': { GET: roles('district', 'manager', 'admin') },
	'/records': { GET: roles('district', 'manager', 'admin') },
	'/records/[id]': { GET: roles('district', 'manager', 'admin') },
	'/records/upkeep-overdue': { GET: roles('district', 'manager', 'admin') },
	'/schema': { GET: publicAccess },
	'/dashboard': { GET: roles('admin', 'manager', 'district') },
	// reviews and field verification
	'/reviews': { GET: roles('manager', 'admin'), POST: roles('manager') },
	'/verification': { GET: roles('manager', 'admin', 'district'), POST: roles('manager', 'district') },

	// --- API ---
	'/api/v1/health': { GET: publicAccess },
	'/api/v1/me': { GET: signedIn },
	'/api/v1/sessions': { POST: publicAccess },
	'/api/v1/tokens': { GET: signedIn, POST: signedIn },
	'/api/v1/tokens/[id]': { DELETE: signedIn },
	'/api/v1/districts': { GET: scope('records:read') },
	'/api/v1/districts/[code]': { GET: ownDistrict(scope('records:read'), 'code') },
	// OAuth client credentials: the client authenticates inside the request (RFC 6749 §2.3.1).
	'/api/v1/oauth/token': { POST: publicAccess },
	'/api/v1/methods': { GET: anyScope('rollups:read', 'records:read'), POST: adminOnly },
	'/api/v1/rollups': { GET: scope('rollups:read') },
	'/api/v1/methods/[version]': { GET: anyScope('rollups:read', 'records:read') },
	'/api/v1/settings/active-method': { GET: anyScope('rollups:read', 'records:read'), PUT: adminOnly },
	'/api/v1/batches': { GET: scope('records:read'), POST: scope('records:write') },
	'/api/v1/batches/[id]': { GET: scope('records:read') },
	'/api/v1/batches/[id]/findings': { GET: scope('records:read') },
	'/api/v1/records': { GET: scope('records:read') },
	'/api/v1/records/[id]': { GET: scope('records:read') },
	'/api/v1/records/[district]/[local_id]': { PUT: ownDistrict(scope('records:write'), 'district') },
	// reviews: the queue (a district reads its own records' state), decisions by the manager only
	'/api/v1/reviews': { GET: scope('records:read') },
	'/api/v1/records/[id]/review': { POST: roles('manager') },
	// field verification: draws by the manager; outcomes by the district (own records) or the manager
	'/api/v1/verification/draws': { GET: scope('records:read'), POST: roles('manager') },
	'/api/v1/verification/draws/[id]': { GET: scope('records:read') },
	'/api/v1/verification/draws/[id]/export': { GET: scope('records:read') },
	'/api/v1/verification/visits': { GET: scope('records:read') },
	'/api/v1/verification/visits/[id]/outcome': { POST: roles('manager', 'district') },
	'/api/v1/verification/visits/[id]/confirm': { POST: roles('manager') },
	'/api/v1/openapi.json': { GET: publicAccess },
	'/api/v1/schema/practice-record.json': { GET: publicAccess },
	'/api/v1/schema/practice-record.csv': { GET: publicAccess },
	'/api/v1/schema/practice-record.xlsx': { GET: publicAccess },
	'/api/v1/schema/practice-event.json': { GET: publicAccess },
	'/api/v1/schema/practice-event.csv': { GET: publicAccess },
	'/api/v1/schema/practice-event.xlsx': { GET: publicAccess },
	'/api/docs': { GET: publicAccess },
	'/api/docs/[asset]': { GET: publicAccess },
	'/dataset': { GET: roles('researcher', 'manager', 'admin'), POST: roles('manager', 'admin') },
	'/api/v1/dataset/releases': { GET: scope('dataset:read'), POST: scopeForRoles('dataset:read', 'manager', 'admin') },
	'/api/v1/dataset/releases/[version]': { GET: scope('dataset:read') },
	'/api/v1/dataset/releases/[version]/files/[name]': { GET: scope('dataset:read') },
	'/api/v1/dataset/releases/[version]/withdraw': { POST: scopeForRoles('dataset:read', 'manager', 'admin') },
	'/api/v1/dataset/records': { GET: scope('dataset:read') }
};

// Exported helpers so the matrix test and the nav share the same vocabulary.
export const access = { public: publicAccess, signedIn, scope, scopeForRoles, anyScope, roles, ownDistrict };

export function ruleFor(routeId: string, method: string): Access | undefined {
	const rules = PERMISSIONS[routeId];
	if (!rules) return undefined;
	const m = (method === 'HEAD' ? 'GET' : method) as Method;
	return rules[m];
}
