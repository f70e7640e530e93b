// Reduction methods API: list, read, add a version (admin), pick the active one (admin); seed idempotency.
import { Kysely, PostgresDialect } from 'kysely';
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedReference } from '../../seeds/reference';
import { DEFAULT_METHOD, type ReductionMethod } from '../../src/lib/domain/reduction-method';
import { hashToken } from '../../src/lib/server/auth/tokens';
import type { Database } from '../../src/lib/server/db/schema';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';

const db = new Kysely<Database>({
	dialect: new PostgresDialect({ pool: new pg.Pool({ connectionString: process.env.DATABASE_URL, max: 2 }) })
});
const DATASET_ONLY = 'rnl_test_methods_dataset_only';
const suffix = Date.now().toString(36);
const NEW_VERSION = `test-${suffix}.1`;

beforeAll(async () => {
	// A researcher token that carries only dataset:read (neither rollups:read nor records:read).
	const researcher = await db.selectFrom('users').select('id').where('role', '=', 'researcher').executeTakeFirstOrThrow();
	await db
		.insertInto('api_tokens')
		.values({
			user_id: researcher.id,
			name: 'methods test',
			token_hash: hashToken(DATASET_ONLY),
			display_prefix: 'rnl_test…',
			scopes: ['dataset:read']
		})
		.onConflict((oc) => oc.column('token_hash').doNothing())
		.execute();
});

afterAll(async () => {
	// Leave the shared test database as the seed made it: the default method active.
	await db
		.updateTable('settings')
		.set({ value: JSON.stringify(DEFAULT_METHOD.version) })
		.where('key', '=', 'active_method_version')
		.execute();
	await db.deleteFrom('api_tokens').where('token_hash', '=', hashToken(DATASET_ONLY)).execute();
	await db.destroy();
});

function newMethod(patch: Partial<ReductionMethod> = {}): ReductionMethod {
	const m = structuredClone(DEFAULT_METHOD);
	m.version = NEW_VERSION;
	m.label = 'Test edition with a higher bioreactor value';
	const bio = m.practices.find((p) => p.practice_code === '605')!;
	bio.n = {
		...bio.n!,
		mean: 0.5,
		citation: { title: 'Test table', publisher: 'Test publisher', year: 2026, section: 'T1', recalled: true }
	};
	return { ...m, ...patch };
}

describe('GET /api/v1/methods', () => {
	it.each(['admin', 'manager', 'district', 'researcher'] as const)('%s can list the methods; the seeded default is active', async (who) => {
		const res = await request(await appHandler())
			.get('/api/v1/methods')
			.set(bearer(DEMO_TOKENS[who]));
		expect(res.status).toBe(200);
		const def = res.body.data.find((m: { version: string }) => m.version === DEFAULT_METHOD.version);
		expect(def).toMatchObject({ version: 'ia-2017.1', created_by: 'seed' });
		expect(res.body.active_version).toEqual(expect.any(String));
	});

	it('the stored default is exactly DEFAULT_METHOD (a changed default needs a new version)', async () => {
		const res = await request(await appHandler())
			.get('/api/v1/methods/ia-2017.1')
			.set(bearer(DEMO_TOKENS.manager));
		expect(res.status).toBe(200);
		expect(res.body.method).toEqual(JSON.parse(JSON.stringify(DEFAULT_METHOD)));
	});

	it('401 without a token; 403 insufficient_scope for a token with neither rollups:read nor records:read', async () => {
		const h = await appHandler();
		expect((await request(h).get('/api/v1/methods')).status).toBe(401);
		const res = await request(h).get('/api/v1/methods').set(bearer(DATASET_ONLY));
		expect(res.status).toBe(403);
		expect(res.headers['www-authenticate']).toContain('error="insufficient_scope"');
		expect(res.headers['www-authenticate']).toContain('rollups:read');
	});

	it('404 problem for an unknown version', async () => {
		const res = await request(await appHandler())
			.get('/api/v1/methods/no-such-version')
			.set(bearer(DEMO_TOKENS.manager));
		expect(res.status).toBe(404);
		expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
	});
});

describe('POST /api/v1/methods and PUT /api/v1/settings/active-method', () => {
	it('only admin may add a version or switch the active one', async () => {
		const h = await appHandler();
		const post = await request(h).post('/api/v1/methods').set(bearer(DEMO_TOKENS.manager)).send(newMethod());
		expect(post.status).toBe(403);
		const put = await request(h).put('/api/v1/settings/active-method').set(bearer(DEMO_TOKENS.manager)).send({ version: 'ia-2017.1' });
		expect(put.status).toBe(403);
	});

	it('refuses an invalid method with a pointer to every problem', async () => {
		const bad = newMethod();
		bad.practices[0].n = { ...bad.practices[0].n!, mean: 43 } as never;
		(bad as { version: string }).version = 'Not A Version';
		const res = await request(await appHandler())
			.post('/api/v1/methods')
			.set(bearer(DEMO_TOKENS.admin))
			.send(bad);
		expect(res.status).toBe(422);
		const pointers = res.body.errors.map((e: { pointer: string }) => e.pointer);
		expect(pointers).toContain('/version');
		expect(pointers).toContain('/practices/0/n/mean');
	});

	it('415 for a body that is not JSON', async () => {
		const res = await request(await appHandler())
			.post('/api/v1/methods')
			.set(bearer(DEMO_TOKENS.admin))
			.set('content-type', 'application/xml') // (text/plain would meet the framework's CSRF check first: 403)
			.send('<method/>');
		expect(res.status).toBe(415);
	});

	it('stores a new version (201 + Location), refuses to overwrite it (409), and switches the active one', async () => {
		const h = await appHandler();
		const created = await request(h).post('/api/v1/methods').set(bearer(DEMO_TOKENS.admin)).send(newMethod());
		expect(created.status).toBe(201);
		expect(created.headers.location).toBe(`/api/v1/methods/${NEW_VERSION}`);
		expect(created.body).toMatchObject({ version: NEW_VERSION, active: false, created_by: expect.stringMatching(/^token:/) });

		const again = await request(h)
			.post('/api/v1/methods')
			.set(bearer(DEMO_TOKENS.admin))
			.send(newMethod({ label: 'changed' }));
		expect(again.status).toBe(409);
		const stored = await request(h).get(`/api/v1/methods/${NEW_VERSION}`).set(bearer(DEMO_TOKENS.manager));
		expect(stored.body.label).toBe('Test edition with a higher bioreactor value');
		expect(stored.body.method.practices.find((p: { practice_code: string }) => p.practice_code === '605').n.mean).toBe(0.5);

		const unknown = await request(h).put('/api/v1/settings/active-method').set(bearer(DEMO_TOKENS.admin)).send({ version: 'nope-1' });
		expect(unknown.status).toBe(422);

		const switched = await request(h).put('/api/v1/settings/active-method').set(bearer(DEMO_TOKENS.admin)).send({ version: NEW_VERSION });
		expect(switched.status).toBe(200);
		expect(switched.body).toEqual({ version: NEW_VERSION, previous_version: 'ia-2017.1' });
		const active = await request(h).get('/api/v1/settings/active-method').set(bearer(DEMO_TOKENS.researcher));
		expect(active.body.version).toBe(NEW_VERSION);
		const list = await request(h).get('/api/v1/methods').set(bearer(DEMO_TOKENS.district));
		expect(list.body.active_version).toBe(NEW_VERSION);

		// The old version still reads exactly as it was.
		const old = await request(h).get('/api/v1/methods/ia-2017.1').set(bearer(DEMO_TOKENS.manager));
		expect(old.body.method.practices.find((p: { practice_code: string }) => p.practice_code === '605').n.mean).toBe(0.43);
		expect(old.body.active).toBe(false);

		const back = await request(h).put('/api/v1/settings/active-method').set(bearer(DEMO_TOKENS.admin)).send({ version: 'ia-2017.1' });
		expect(back.status).toBe(200);
	});
});

describe('seeding reference data again', () => {
	it('keeps the admin’s active method and never overwrites a stored version', async () => {
		await db
			.updateTable('settings')
			.set({ value: JSON.stringify(NEW_VERSION) })
			.where('key', '=', 'active_method_version')
			.execute();
		const before = await db.selectFrom('reduction_methods').select(['version', 'method', 'created_at']).orderBy('version').execute();
		await seedReference(db);
		const after = await db.selectFrom('reduction_methods').select(['version', 'method', 'created_at']).orderBy('version').execute();
		expect(after).toEqual(before);
		const active = await db.selectFrom('settings').select('value').where('key', '=', 'active_method_version').executeTakeFirstOrThrow();
		expect(active.value).toBe(NEW_VERSION);
	});
});
