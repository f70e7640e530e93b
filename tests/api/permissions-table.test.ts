// Every route file is in the one permission table, for every method it answers, and the table names
// no route that does not exist. (The full authorization matrix over roles and tokens builds on this.)
import { describe, expect, it } from 'vitest';
import { PERMISSIONS } from '$lib/server/auth/permissions';
import { listRoutes } from '../helpers/routes';

const routes = listRoutes();

describe('permission table covers every route', () => {
	it.each(routes.map((r) => [`${r.kind} ${r.id}`, r] as const))('%s is in the table', (_label, r) => {
		const rules = PERMISSIONS[r.id];
		expect(rules, `${r.id} is missing from src/lib/server/auth/permissions.ts`).toBeDefined();
		for (const m of r.methods) expect(rules?.[m as keyof typeof rules], `${m} ${r.id}`).toBeDefined();
	});

	it('names only routes that exist', () => {
		const ids = new Set(routes.map((r) => r.id));
		for (const id of Object.keys(PERMISSIONS)) expect(ids.has(id), `${id} in the table has no route file`).toBe(true);
	});
});
