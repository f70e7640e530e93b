// Signing keys in their own database: generated once even when several callers race, the private key
// encrypted at rest under RUNNEL_KEY_SECRET, JWS/JWT signatures that verify only while the key is
// published, and rotation/retirement rules.
import { compactVerify, createLocalJWKSet, decodeProtectedHeader, jwtVerify } from 'jose';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createOwnDatabase } from '../helpers/db';

type Keys = typeof import('$lib/server/keys');
type Db = typeof import('$lib/server/db');

const mainUrl = process.env.DATABASE_URL!;
let own: Awaited<ReturnType<typeof createOwnDatabase>>;
let keys: Keys;
let dbm: Db;

beforeAll(async () => {
	own = await createOwnDatabase('runnel_keys');
	process.env.DATABASE_URL = own.url;
	delete process.env.RUNNEL_KEY_SECRET;
	dbm = await import('$lib/server/db');
	keys = await import('$lib/server/keys');
});
afterAll(async () => {
	await dbm?.closeDb();
	process.env.DATABASE_URL = mainUrl;
	delete process.env.RUNNEL_KEY_SECRET;
	await own?.drop();
});

const rows = () => dbm.getDb().selectFrom('signing_keys').selectAll().orderBy('created_at').execute();

describe('signing keys', () => {
	it('the first key is generated once even when eight callers ask at the same moment', async () => {
		expect(await rows()).toHaveLength(0);
		const kids = await Promise.all(Array.from({ length: 8 }, () => keys.activeKid()));
		expect(new Set(kids).size).toBe(1);
		const all = await rows();
		expect(all).toHaveLength(1);
		expect(all[0]).toMatchObject({ kid: kids[0], alg: 'ES256', status: 'active' });
		// Without RUNNEL_KEY_SECRET the private JWK is stored as is (and said so).
		expect(all[0].private_jwk.startsWith('plain:')).toBe(true);
		expect((await keys.listSigningKeys())[0].encrypted).toBe(false);
	});

	it('the kid is the RFC 7638 thumbprint of the public key, and the JWK Set has no private member', async () => {
		const set = await keys.publicJwks();
		expect(set.keys).toHaveLength(1);
		const [k] = set.keys;
		expect(Object.keys(k).sort()).toEqual(['alg', 'crv', 'kid', 'kty', 'use', 'x', 'y']);
		const { calculateJwkThumbprint } = await import('jose');
		expect(await calculateJwkThumbprint({ kty: k.kty, crv: k.crv, x: k.x, y: k.y })).toBe(k.kid);
	});

	it('once RUNNEL_KEY_SECRET is set, the stored private key is encrypted (a JWE) and still signs', async () => {
		process.env.RUNNEL_KEY_SECRET = 'test secret: correct horse battery staple';
		const before = (await rows())[0];
		const d = (JSON.parse(before.private_jwk.slice('plain:'.length)) as { d: string }).d;
		const jws = await keys.signJws({ hello: 'world' });
		const after = (await rows())[0];
		expect(after.private_jwk.startsWith('jwe:')).toBe(true);
		expect(after.private_jwk).not.toContain(d);
		expect(decodeProtectedHeader(after.private_jwk.slice(4))).toMatchObject({ alg: 'dir', enc: 'A256GCM' });
		const { payload } = await keys.verifyJws(jws);
		expect(JSON.parse(new TextDecoder().decode(payload))).toEqual({ hello: 'world' });
	});

	it('a different secret cannot open the key, and says so', async () => {
		const { rotateSigningKey } = keys;
		await rotateSigningKey(); // a new key, encrypted under the current secret
		process.env.RUNNEL_KEY_SECRET = 'another secret';
		// Keys are imported once per process; a fresh process (module) is what meets the wrong secret.
		const { vi } = await import('vitest');
		vi.resetModules();
		const fresh = (await import('$lib/server/keys')) as Keys;
		await expect(fresh.signJws('x')).rejects.toThrow(/RUNNEL_KEY_SECRET differs/);
		delete process.env.RUNNEL_KEY_SECRET;
		await expect(fresh.signJws('x')).rejects.toThrow(/RUNNEL_KEY_SECRET is not set/);
		process.env.RUNNEL_KEY_SECRET = 'test secret: correct horse battery staple';
		await expect(fresh.signJws('x')).resolves.toMatch(/^[\w-]+\.[\w-]+\.[\w-]+$/);
	});

	it('signJws and signJwt verify against the published keys (and only while published)', async () => {
		const manifest = await keys.signJws({ release: '2026.1', sha256: 'ab'.repeat(32) }, { typ: 'runnel-manifest+jws' });
		expect(decodeProtectedHeader(manifest)).toMatchObject({ alg: 'ES256', typ: 'runnel-manifest+jws', kid: await keys.activeKid() });
		const jwks = createLocalJWKSet(await keys.publicJwks());
		await expect(compactVerify(manifest, jwks)).resolves.toBeTruthy();
		const jwt = await keys.signJwt({ sub: 'x', aud: 'y' }, { expiresInSeconds: 60 });
		await expect(jwtVerify(jwt, jwks, { audience: 'y' })).resolves.toBeTruthy();

		// One character changed in the payload: refused.
		const [h, p, s] = manifest.split('.');
		const tampered = `${h}.${p.slice(0, -2)}${p.at(-2) === 'A' ? 'B' : 'A'}${p.at(-1)}.${s}`;
		await expect(keys.verifyJws(tampered)).rejects.toThrow();

		// Rotate, retire the old key: what it signed no longer verifies, what the new one signs does.
		const oldKid = await keys.activeKid();
		await keys.rotateSigningKey();
		await expect(keys.verifyJws(manifest)).resolves.toBeTruthy(); // still published as `previous`
		await keys.retireSigningKey(oldKid, { force: true });
		await expect(keys.verifyJws(manifest)).rejects.toThrow(/unknown or retired key/);
		await expect(keys.verifyJws(await keys.signJws('new'))).resolves.toBeTruthy();
		expect((await keys.publicJwks()).keys.map((k) => k.kid)).not.toContain(oldKid);
	});

	it('rotation keeps exactly one active key; retirement refuses the active key and recent ones', async () => {
		const statuses = (await rows()).map((r) => r.status);
		expect(statuses.filter((s) => s === 'active')).toHaveLength(1);
		const active = await keys.activeKid();
		await expect(keys.retireSigningKey(active)).rejects.toThrow(/active/);
		const { previousKid } = await keys.rotateSigningKey();
		expect(previousKid).toBe(active);
		await expect(keys.retireSigningKey(active)).rejects.toThrow(/may still be valid/);
		await expect(keys.retireSigningKey('no-such-kid')).rejects.toThrow(/no signing key/);
	});
});
