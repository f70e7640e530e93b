// The one route-permission table. Every SvelteKit route id (pages and /api/v1 endpoints) has an
// entry per method it answers; hooks.server.ts enforces it before any route code runs, and
// tests/api/authz-matrix.test.ts walks it against every route file, so a new route cannot skip it.
//
// Pages: GET is the page view (its load), POST its form actions. District-only-own-data rules are
// enforced in the queries (a district principal always filters by its own district).
import type { Role, Scope } from '$lib/domain/scopes';

export type Access =
	| { kind: 'public' }
	| { kind: 'signed-in' }
	| { kind: 'scope'; scope: Scope }
	| { kind: 'any-scope'; scopes: Scope[] }
	| { kind: 'roles'; roles: Role[] };

export type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
export type RouteRules = Partial<Record<Method, Access>>;

const publicAccess: Access = { kind: 'public' };
const signedIn: Access = { kind: 'signed-in' };
const scope = (s: Scope): Access => ({ kind: 'scope', scope: s });
const roles = (...r: Role[]): Access => ({ kind: 'roles', roles: r });
/** Any one of these scopes will do. */
const anyScope = (...s: Scope[]): Access => ({ kind: 'any-scope', scopes: s });

export const PERMISSIONS: Record<string, RouteRules> = {
	// --- pages ---
	'/': { GET: publicAccess },
	'/methods': { GET: signedIn, POST: roles('admin') },
	'/methods/new': { GET: roles('admin'), POST: roles('admin') },
	'/batches': { GET: roles('district', 'manager', 'admin') },
	'/batches/[id]': { GET: roles('district', 'manager', 'admin') },
	'/records': { GET: roles('district', 'manager', 'admin') },
	'/records/[id]': { GET: roles('district', 'manager', 'admin') },
	'/admin/outbox': { GET: roles('admin') },
	'/admin/outbox/[id]': { GET: roles('admin'), POST: roles('admin') },
	'/admin/oauth-clients': { GET: roles('admin'), POST: roles('admin') },
	'/.well-known/jwks.json': { GET: publicAccess },
	'/dashboard': { GET: roles('admin', 'manager', 'district') },

	// --- API ---
	'/api/v1/health': { GET: publicAccess },
	'/api/v1/me': { GET: signedIn },
	'/api/v1/methods': { GET: anyScope('rollups:read', 'records:read'), POST: scope('admin') },
	'/api/v1/methods/[version]': { GET: anyScope('rollups:read', 'records:read') },
	'/api/v1/settings/active-method': { GET: anyScope('rollups:read', 'records:read'), PUT: scope('admin') },
	'/api/v1/batches': { GET: scope('records:read'), POST: scope('records:write') },
	'/api/v1/batches/[id]': { GET: scope('records:read') },
	'/api/v1/batches/[id]/findings': { GET: scope('records:read') },
	'/api/v1/records': { GET: scope('records:read') },
	'/api/v1/records/[id]': { GET: scope('records:read') },
	'/api/v1/records/[district]/[local_id]': { PUT: scope('records:write') },
	// OAuth client credentials: the client authenticates inside the request (RFC 6749 §2.3.1).
	'/api/v1/oauth/token': { POST: publicAccess },
	'/api/v1/dataset/releases': { GET: scope('dataset:read'), POST: scope('dataset:read') },
	'/api/v1/dataset/releases/[version]': { GET: scope('dataset:read') },
	'/api/v1/dataset/releases/[version]/files/[name]': { GET: scope('dataset:read') },
	'/api/v1/dataset/releases/[version]/withdraw': { POST: scope('dataset:read') },
	'/api/v1/dataset/records': { GET: scope('dataset:read') },
	'/api/v1/rollups': { GET: scope('rollups:read') }
};

// Exported helpers so the matrix test and the nav share the same vocabulary.
export const access = { public: publicAccess, signedIn, scope, anyScope, roles };

export function ruleFor(routeId: string, method: string): Access | undefined {
	const rules = PERMISSIONS[routeId];
	if (!rules) return undefined;
	const m = (method === 'HEAD' ? 'GET' : method) as Method;
	return rules[m];
}
