// The authorization matrix, generated from the one permission table (src/lib/server/auth/permissions.ts)
// and the route files (tests/helpers/routes.ts): every page and /api/v1 route, every method it answers,
// against anonymous callers, each demo role (its demo token on the API, a session on pages), a token that
// lacks the scope the route needs, and a district token of the *other* district where the route is
// district-scoped. A route missing from the table is a failing cell, so no later route can skip it.
//
// The expected outcome is worked out here from the table's meaning (not by calling the app's own
// decision code), and the request goes through the built app, hooks and all.
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ROLE_SCOPES, SCOPES, type Role, type Scope } from '$lib/domain/scopes';
import { PERMISSIONS, ruleFor, type Access } from '$lib/server/auth/permissions';
import { closeDb, getDb } from '$lib/server/db';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';
import { createToken, origin, sessionCookie, userIdOf } from '../helpers/accounts';
import { listRoutes, type RouteInfo } from '../helpers/routes';

type Who =
	| { label: string; kind: 'anonymous' }
	| {
			label: string;
			kind: 'demo';
			demo: keyof typeof DEMO_TOKENS;
			role: Role;
			district: 'first' | 'second' | null;
			scopes: readonly Scope[];
	  }
	| { label: string; kind: 'lacking'; lacks: Scope; role: Role; district: null; scopes: readonly Scope[] };

const DEMO: Array<{ demo: keyof typeof DEMO_TOKENS; email: string; role: Role; district: 'first' | 'second' | null }> = [
	{ demo: 'admin', email: 'admin@runnel.test', role: 'admin', district: null },
	{ demo: 'manager', email: 'manager@runnel.test', role: 'manager', district: null },
	{ demo: 'district', email: 'district@runnel.test', role: 'district', district: 'first' },
	{ demo: 'district2', email: 'district2@runnel.test', role: 'district', district: 'second' },
	{ demo: 'researcher', email: 'researcher@runnel.test', role: 'researcher', district: null }
];
const FIRST_DISTRICT = 'BLH'; // the demo district of district@runnel.test (seeds/demo.ts)

type Expect = 'allow' | 'unauthenticated' | 'forbidden' | 'insufficient_scope';

/** What the table says should happen (the spec, restated independently of the app's code). */
function expected(rule: Access, who: Who): Expect {
	if (rule.kind === 'public') return 'allow';
	if (who.kind === 'anonymous') return 'unauthenticated';
	if (rule.kind === 'scope' && !who.scopes.includes(rule.scope)) return 'insufficient_scope';
	if (rule.kind === 'roles' && !rule.roles.includes(who.role)) return 'forbidden';
	if (rule.kind === 'scope' && rule.roles && !rule.roles.includes(who.role)) return 'forbidden';
	// District-scoped path: the sample names the first demo district.
	if (rule.districtParam && who.district === 'second') return 'forbidden';
	return 'allow';
}

/** Sample values for route parameters. Routes whose pages need a real row name it here. */
const SAMPLES: Record<string, () => Promise<Record<string, string>>> = {
	'/admin/users/[id]': async () => ({ id: String(await userIdOf('district@runnel.test')) }),
	'/admin/districts/[id]': async () => ({
		id: String((await getDb().selectFrom('districts').select('id').where('code', '=', FIRST_DISTRICT).executeTakeFirstOrThrow()).id)
	}),
	// A token id that does not exist, so an allowed DELETE changes nothing.
	'/api/v1/tokens/[id]': async () => ({ id: '2147483000' })
};

async function urlFor(route: RouteInfo, rule: Access | undefined): Promise<string> {
	const values = (await SAMPLES[route.id]?.()) ?? {};
	return route.id
		.replace(/\/\([^)]+\)/g, '')
		.replace(/\[\.\.\.([^\]]+)\]/g, (_m, n) => values[n] ?? 'sample')
		.replace(/\[\[([^\]=]+)(=[^\]]+)?\]\]/g, (_m, n) => values[n] ?? '')
		.replace(/\[([^\]=]+)(=[^\]]+)?\]/g, (_m, n: string) => values[n] ?? (rule?.districtParam === n ? FIRST_DISTRICT : 'sample'));
}

const routes = listRoutes().filter((r) => r.kind === 'page' || r.id.startsWith('/api/v1') || !r.id.startsWith('/api/'));
const isApi = (r: RouteInfo) => r.id.startsWith('/api/');

interface Cell {
	name: string;
	route: RouteInfo;
	method: string;
	rule: Access | undefined;
	who: Who;
	expect: Expect | 'missing';
}

const anonymous: Who = { label: 'anonymous', kind: 'anonymous' };
const demoWho = DEMO.map((d): Who => ({
	label: d.demo === 'district2' ? 'district (other district)' : d.demo,
	kind: 'demo',
	demo: d.demo,
	role: d.role,
	district: d.district,
	scopes: ROLE_SCOPES[d.role]
}));

const cells: Cell[] = [];
for (const route of routes) {
	for (const method of route.methods) {
		const rule = ruleFor(route.id, method);
		const kind = isApi(route) ? 'API' : route.kind === 'page' ? 'page' : 'endpoint';
		if (!rule) {
			cells.push({
				name: `${method} ${route.id} (${kind}) is in the permission table`,
				route,
				method,
				rule,
				who: anonymous,
				expect: 'missing'
			});
			continue;
		}
		const whos: Who[] = [anonymous, ...demoWho];
		if (rule.kind === 'scope') {
			whos.push({
				label: `token lacking ${rule.scope}`,
				kind: 'lacking',
				lacks: rule.scope,
				role: 'admin',
				district: null,
				scopes: SCOPES.filter((s) => s !== rule.scope)
			});
		}
		for (const who of whos) {
			// The "other district" column exists only where the route is district-scoped.
			const label = who.kind === 'demo' && who.demo === 'district2' && !rule.districtParam ? 'district2' : who.label;
			const e = expected(rule, who);
			cells.push({ name: `${method} ${route.id} (${kind}) × ${label} → ${e}`, route, method, rule, who, expect: e });
		}
	}
}

const lackingTokens = new Map<Scope, string>();

beforeAll(async () => {
	const adminId = await userIdOf('admin@runnel.test');
	for (const s of SCOPES)
		lackingTokens.set(
			s,
			await createToken(
				adminId,
				SCOPES.filter((x) => x !== s),
				`matrix: lacks ${s}`
			)
		);
});
afterAll(async () => {
	await getDb().deleteFrom('api_tokens').where('name', 'like', 'matrix: %').execute();
	await closeDb();
});

async function credentials(cell: Cell): Promise<Record<string, string>> {
	const who = cell.who;
	if (who.kind === 'anonymous') return {};
	if (who.kind === 'lacking') return bearer(lackingTokens.get(who.lacks)!);
	if (cell.route.kind === 'page' && !isApi(cell.route)) {
		// Pages are used by people in a browser: a fresh session per cell (sign-out must not spoil the next one).
		return { cookie: await sessionCookie(DEMO.find((d) => d.demo === who.demo)!.email) };
	}
	return bearer(DEMO_TOKENS[who.demo]);
}

describe(`authorization matrix (${cells.length} cells)`, () => {
	it('covers every route file', () => {
		expect(new Set(cells.map((c) => c.route.id)).size).toBe(routes.length);
		expect(routes.length).toBeGreaterThan(5);
	});

	it.each(cells.map((c) => [c.name, c] as const))('%s', async (_name, cell) => {
		if (cell.expect === 'missing') {
			expect.fail(`${cell.method} ${cell.route.id} is not in PERMISSIONS (src/lib/server/auth/permissions.ts); add it`);
		}
		const url = await urlFor(cell.route, cell.rule);
		const headers = await credentials(cell);
		const app = await appHandler();
		const m = cell.method.toLowerCase() as 'get' | 'post' | 'put' | 'patch' | 'delete';
		let req = request(app)[m](url).redirects(0);
		for (const [k, v] of Object.entries(headers)) req = req.set(k, v);
		const api = isApi(cell.route);
		if (api) {
			req = req.set('accept', 'application/json');
			if (m !== 'get') req = req.set('content-type', 'application/json').send('{}');
		} else {
			req = req.set('accept', 'text/html');
			if (m !== 'get') req = req.set('origin', origin()).type('form').send('');
		}
		const res = await req;
		const where = `${cell.method} ${url} → ${res.status} ${res.headers.location ?? ''}`;

		switch (cell.expect) {
			case 'allow':
				expect(res.status, where).toBeLessThan(500);
				expect([401, 403], where).not.toContain(res.status);
				expect(String(res.headers.location ?? ''), where).not.toMatch(/^\/sign-in\?next=/);
				break;
			case 'unauthenticated':
				if (api) {
					expect(res.status, where).toBe(401);
					expect(res.headers['content-type'], where).toMatch(/^application\/problem\+json/);
					expect(res.headers['www-authenticate'], where).toMatch(/^Bearer/);
				} else {
					expect(res.status, where).toBe(303);
					expect(res.headers.location, where).toMatch(/^\/sign-in\?next=/);
				}
				break;
			case 'insufficient_scope':
			case 'forbidden':
				expect(res.status, where).toBe(403);
				if (api) {
					expect(res.headers['content-type'], where).toMatch(/^application\/problem\+json/);
					if (cell.expect === 'insufficient_scope') {
						expect(res.headers['www-authenticate'], where).toContain('error="insufficient_scope"');
						expect(res.headers['www-authenticate'], where).toContain(`scope="${(cell.rule as { scope: string }).scope}"`);
					}
				}
				break;
		}
	});
});

describe('the matrix itself', () => {
	it('has a district-scoped route, so the other-district column is exercised', () => {
		expect(Object.values(PERMISSIONS).some((rules) => Object.values(rules).some((r) => r?.districtParam))).toBe(true);
		expect(cells.some((c) => c.name.includes('(other district)') && c.expect === 'forbidden')).toBe(true);
	});
});
