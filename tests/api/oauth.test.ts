// OAuth 2.0 client credentials (RFC 6749 §4.4) with RFC 9068 JWT access tokens: the token endpoint
// and its errors (§5.2), the token at the API, signature checks against /.well-known/jwks.json with
// jose, expiry and tampering, revocation, key rotation, and the CSRF rule for the token endpoint.
import { createLocalJWKSet, createRemoteJWKSet, decodeJwt, decodeProtectedHeader, jwtVerify, type JSONWebKeySet } from 'jose';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { registerClient } from '$lib/server/auth/oauth-clients';
import { closeDb, getDb } from '$lib/server/db';
import { retireSigningKey, rotateSigningKey, signJwt } from '$lib/server/keys';
import { appHandler, bearer, DEMO_TOKENS, startApp } from '../helpers/app';

type Handler = Awaited<ReturnType<typeof appHandler>>;
let app: Handler;
let districtId: number;
let full: { id: string; secret: string };
let readOnly: { id: string; secret: string };
const ORIGIN = () => process.env.ORIGIN!;

const basic = (id: string, secret: string) => ({
	Authorization: 'Basic ' + Buffer.from(`${encodeURIComponent(id)}:${encodeURIComponent(secret)}`).toString('base64')
});

function tokenRequest(body: string, headers: Record<string, string> = {}) {
	return request(app).post('/api/v1/oauth/token').type('form').set(headers).send(body);
}

async function token(c = full, scope?: string): Promise<string> {
	const res = await tokenRequest(
		`grant_type=client_credentials${scope ? `&scope=${encodeURIComponent(scope)}` : ''}`,
		basic(c.id, c.secret)
	);
	expect(res.status, JSON.stringify(res.body)).toBe(200);
	return res.body.access_token;
}

beforeAll(async () => {
	app = await appHandler();
	const d = await getDb().selectFrom('districts').select('id').where('code', '=', 'BLH').executeTakeFirstOrThrow();
	districtId = d.id;
	const a = await registerClient(getDb(), {
		name: 'Bluestem nightly sync',
		districtId,
		scopes: ['records:write', 'records:read', 'rollups:read'],
		createdBy: null
	});
	full = { id: a.client.client_id, secret: a.clientSecret };
	const b = await registerClient(getDb(), { name: 'Bluestem read-only', districtId, scopes: ['records:read'], createdBy: null });
	readOnly = { id: b.client.client_id, secret: b.clientSecret };
});
afterAll(() => closeDb());

describe('POST /api/v1/oauth/token', () => {
	it('issues a Bearer JWT for HTTP Basic client authentication (RFC 6749 §4.4.3, §5.1)', async () => {
		const res = await tokenRequest('grant_type=client_credentials', basic(full.id, full.secret));
		expect(res.status).toBe(200);
		expect(res.headers['content-type']).toMatch(/^application\/json/);
		expect(res.headers['cache-control']).toBe('no-store');
		expect(res.body).toEqual({
			access_token: expect.any(String),
			token_type: 'Bearer',
			expires_in: 600,
			scope: 'records:write records:read rollups:read'
		});
	});

	it('the token follows RFC 9068: typ at+jwt, iss, aud, sub, client_id, scope, exp, iat, jti', async () => {
		const t = await token();
		const header = decodeProtectedHeader(t);
		expect(header).toMatchObject({ typ: 'at+jwt', alg: 'ES256', kid: expect.any(String) });
		const claims = decodeJwt(t);
		expect(claims).toMatchObject({
			iss: ORIGIN(),
			aud: `${ORIGIN()}/api/v1`,
			sub: full.id,
			client_id: full.id,
			scope: 'records:write records:read rollups:read',
			jti: expect.stringMatching(/^[0-9a-f-]{36}$/)
		});
		expect(claims.exp! - claims.iat!).toBe(600);
		expect(Math.abs(claims.iat! - Date.now() / 1000)).toBeLessThan(30);
		expect(decodeJwt(await token()).jti).not.toBe(claims.jti);
	});

	it('accepts client_id and client_secret in the body too (§2.3.1)', async () => {
		const res = await tokenRequest(
			`grant_type=client_credentials&client_id=${encodeURIComponent(readOnly.id)}&client_secret=${encodeURIComponent(readOnly.secret)}`
		);
		expect(res.status).toBe(200);
		expect(res.body.scope).toBe('records:read');
	});

	it('narrows to the requested scopes', async () => {
		const res = await tokenRequest('grant_type=client_credentials&scope=rollups%3Aread', basic(full.id, full.secret));
		expect(res.status).toBe(200);
		expect(res.body.scope).toBe('rollups:read');
	});

	it('wrong secret, unknown client or no authentication → 401 invalid_client with WWW-Authenticate: Basic (§5.2)', async () => {
		for (const headers of [basic(full.id, full.secret + 'x'), basic('rnlc_nobody', full.secret), {}]) {
			const res = await tokenRequest('grant_type=client_credentials', headers);
			expect(res.status).toBe(401);
			expect(res.body.error).toBe('invalid_client');
			expect(res.headers['www-authenticate']).toMatch(/^Basic realm="runnel"/);
			expect(res.headers['cache-control']).toBe('no-store');
		}
	});

	it('another grant type → 400 unsupported_grant_type', async () => {
		const res = await tokenRequest('grant_type=password&username=a&password=b', basic(full.id, full.secret));
		expect(res.status).toBe(400);
		expect(res.body.error).toBe('unsupported_grant_type');
	});

	it('a scope the client does not hold → 400 invalid_scope', async () => {
		for (const [c, scope] of [
			[full, 'admin'],
			[full, 'dataset:read'],
			[readOnly, 'records:write'],
			[full, 'records:read nonsense']
		] as const) {
			const res = await tokenRequest(`grant_type=client_credentials&scope=${encodeURIComponent(scope)}`, basic(c.id, c.secret));
			expect(res.status, scope).toBe(400);
			expect(res.body.error).toBe('invalid_scope');
		}
	});

	it('malformed requests → 400 invalid_request', async () => {
		const json = await request(app).post('/api/v1/oauth/token').set(basic(full.id, full.secret)).send({ grant_type: 'client_credentials' });
		expect(json.status).toBe(400);
		expect(json.body.error).toBe('invalid_request');
		const noGrant = await tokenRequest('scope=records%3Aread', basic(full.id, full.secret));
		expect(noGrant.body.error).toBe('invalid_request');
		const repeated = await tokenRequest('grant_type=client_credentials&grant_type=client_credentials', basic(full.id, full.secret));
		expect(repeated.body.error).toBe('invalid_request');
		const both = await tokenRequest(`grant_type=client_credentials&client_secret=${full.secret}`, basic(full.id, full.secret));
		expect(both.body.error).toBe('invalid_request');
	});

	it('GET is not allowed', async () => {
		expect((await request(app).get('/api/v1/oauth/token')).status).toBe(405);
	});
});

describe('CSRF rule at the token endpoint', () => {
	// SvelteKit 2's built-in origin check refuses a form POST whose Origin header is missing, which
	// every script and OAuth library sends; ours lets exactly that through on this one route.
	it('a script (no Origin header) gets a token; a browser on our origin too', async () => {
		expect((await tokenRequest('grant_type=client_credentials', basic(full.id, full.secret))).status).toBe(200);
		expect((await tokenRequest('grant_type=client_credentials', { ...basic(full.id, full.secret), Origin: ORIGIN() })).status).toBe(200);
	});
	it('a form posted from another site is refused', async () => {
		const res = await tokenRequest('grant_type=client_credentials', {
			...basic(full.id, full.secret),
			Origin: 'https://elsewhere.example'
		});
		expect(res.status).toBe(403);
		expect(res.text).toMatch(/Cross-site POST form submissions are forbidden/);
	});
	it('everywhere else, a form post without our Origin is refused as before', async () => {
		for (const origin of [null, 'https://elsewhere.example', 'null']) {
			const req = request(app).post('/admin/oauth-clients?/create').set(bearer(DEMO_TOKENS.admin)).type('form');
			if (origin) req.set('Origin', origin);
			const res = await req.send('name=x&district_id=1&scopes=records%3Aread');
			expect(res.status, String(origin)).toBe(403);
		}
		const api = await request(app).post('/api/v1/me').type('form').send('a=1');
		expect(api.status).toBe(403);
		expect(api.headers['content-type']).toMatch(/^application\/problem\+json/);
		const sameOrigin = await request(app)
			.post('/admin/oauth-clients?/create')
			.set(bearer(DEMO_TOKENS.admin))
			.set('Origin', ORIGIN())
			.set('Accept', 'text/html')
			.type('form')
			.send('name=&district_id=&scopes=records%3Aread');
		// Past the CSRF check, refused by validation: the page (a browser without JavaScript) shows the field errors.
		expect(sameOrigin.status).toBe(400);
		expect(sameOrigin.text).toContain('Give the client a name');
		expect(sameOrigin.text).toContain('Choose a district.');
	});
});

describe('the access token at the API', () => {
	it('GET /api/v1/me: kind client, role district, the client’s district and the token’s scopes', async () => {
		const t = await token(full, 'records:read rollups:read');
		const res = await request(app).get('/api/v1/me').set(bearer(t));
		expect(res.status).toBe(200);
		expect(res.body).toMatchObject({
			kind: 'client',
			role: 'district',
			district_id: districtId,
			scopes: ['records:read', 'rollups:read'],
			name: 'Bluestem nightly sync',
			user_id: null
		});
		expect(new Date(res.body.expires_at).getTime() / 1000).toBe(decodeJwt(t).exp);
	});

	it('its signature verifies against /.well-known/jwks.json with jose (local JWK Set)', async () => {
		const t = await token();
		const jwks = await request(app).get('/.well-known/jwks.json');
		expect(jwks.status).toBe(200);
		expect(jwks.headers['content-type']).toMatch(/^application\/jwk-set\+json/);
		const set = JSON.parse(jwks.text) as JSONWebKeySet;
		expect(set.keys.length).toBeGreaterThan(0);
		for (const k of set.keys) {
			expect(k).toMatchObject({ kty: 'EC', crv: 'P-256', alg: 'ES256', use: 'sig', kid: expect.any(String) });
			expect(k).not.toHaveProperty('d'); // never the private part
		}
		const { payload, protectedHeader } = await jwtVerify(t, createLocalJWKSet(set), {
			issuer: ORIGIN(),
			audience: `${ORIGIN()}/api/v1`,
			typ: 'at+jwt',
			algorithms: ['ES256']
		});
		expect(payload.client_id).toBe(full.id);
		expect(set.keys.map((k) => k.kid)).toContain(protectedHeader.kid);
	});

	it('its signature verifies with createRemoteJWKSet over HTTP', async () => {
		const server = await startApp();
		try {
			const t = await token();
			const { payload } = await jwtVerify(t, createRemoteJWKSet(new URL(`${server.origin}/.well-known/jwks.json`)), {
				issuer: ORIGIN(),
				audience: `${ORIGIN()}/api/v1`
			});
			expect(payload.sub).toBe(full.id);
		} finally {
			await server.close();
		}
	});

	const claimsFor = (c: { id: string }, extra: Record<string, unknown> = {}) => ({
		iss: ORIGIN(),
		aud: `${ORIGIN()}/api/v1`,
		sub: c.id,
		client_id: c.id,
		scope: 'records:read',
		jti: crypto.randomUUID(),
		...extra
	});
	const me = (t: string) => request(app).get('/api/v1/me').set(bearer(t));

	it('an expired token → 401 invalid_token (the same token unexpired is accepted)', async () => {
		const valid = await signJwt(claimsFor(full), { typ: 'at+jwt', expiresInSeconds: 60 });
		expect((await me(valid)).status).toBe(200);
		const expired = await signJwt(claimsFor(full), { typ: 'at+jwt', expiresInSeconds: -60 });
		const res = await me(expired);
		expect(res.status).toBe(401);
		expect(res.headers['www-authenticate']).toContain('error="invalid_token"');
		expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
	});

	it('a token with one character changed → 401 (payload, signature or header)', async () => {
		const t = await token();
		const [h, p, s] = t.split('.');
		const flip = (x: string, i: number) => x.slice(0, i) + (x[i] === 'A' ? 'B' : 'A') + x.slice(i + 1);
		for (const tampered of [`${h}.${flip(p, 10)}.${s}`, `${h}.${p}.${flip(s, 5)}`, `${flip(h, 3)}.${p}.${s}`]) {
			expect(tampered).not.toBe(t);
			expect((await me(tampered)).status).toBe(401);
		}
		expect((await me(t)).status).toBe(200);
	});

	it('wrong typ, audience or issuer, or a client that does not exist → 401', async () => {
		expect((await me(await signJwt(claimsFor(full), { typ: 'JWT', expiresInSeconds: 60 }))).status).toBe(401);
		expect(
			(await me(await signJwt(claimsFor(full, { aud: 'https://elsewhere.example/api' }), { typ: 'at+jwt', expiresInSeconds: 60 }))).status
		).toBe(401);
		expect(
			(await me(await signJwt(claimsFor(full, { iss: 'https://elsewhere.example' }), { typ: 'at+jwt', expiresInSeconds: 60 }))).status
		).toBe(401);
		expect((await me(await signJwt(claimsFor({ id: 'rnlc_ghost' }), { typ: 'at+jwt', expiresInSeconds: 60 }))).status).toBe(401);
	});

	it('scopes beyond what the client holds are dropped even when a token claims them', async () => {
		const t = await signJwt(claimsFor(readOnly, { scope: 'records:read records:write admin' }), { typ: 'at+jwt', expiresInSeconds: 60 });
		const res = await me(t);
		expect(res.status).toBe(200);
		expect(res.body.scopes).toEqual(['records:read']);
	});

	it('revoking the client stops its tokens at once and refuses new ones', async () => {
		const c = await registerClient(getDb(), { name: 'Short-lived', districtId, scopes: ['records:read'], createdBy: null });
		const creds = { id: c.client.client_id, secret: c.clientSecret };
		const t = await token(creds);
		expect((await me(t)).status).toBe(200);
		const revoke = await request(app)
			.post('/admin/oauth-clients?/revoke')
			.set(bearer(DEMO_TOKENS.admin))
			.set('Origin', ORIGIN())
			.type('form')
			.send(`id=${c.client.id}`);
		expect(revoke.status).toBe(200);
		expect((await me(t)).status).toBe(401);
		const again = await tokenRequest('grant_type=client_credentials', basic(creds.id, creds.secret));
		expect(again.status).toBe(401);
		expect(again.body.error).toBe('invalid_client');
	});
});

describe('signing key rotation', () => {
	it('new tokens use the new key; tokens of the old key keep working until it is retired', async () => {
		// Start on a key of this test's own: the key active until now signed the demo release, which other
		// test files verify against the JWKS, so it must stay published (as `previous`).
		await rotateSigningKey();
		const before = await token();
		const oldKid = decodeProtectedHeader(before).kid!;
		const { kid: newKid, previousKid } = await rotateSigningKey();
		expect(previousKid).toBe(oldKid);
		const after = await token();
		expect(decodeProtectedHeader(after).kid).toBe(newKid);

		const set = (await request(app).get('/.well-known/jwks.json')).body as JSONWebKeySet;
		expect(set.keys.map((k) => k.kid)).toEqual(expect.arrayContaining([oldKid, newKid]));
		expect(set.keys[0].kid).toBe(newKid); // the active key first
		expect((await me(before)).status).toBe(200);
		expect((await me(after)).status).toBe(200);

		await expect(retireSigningKey(newKid)).rejects.toThrow(/active/);
		await expect(retireSigningKey(oldKid)).rejects.toThrow(/may still be valid/);
		await retireSigningKey(oldKid, { force: true });
		expect((await me(before)).status).toBe(401);
		expect((await me(after)).status).toBe(200);
		const later = (await request(app).get('/.well-known/jwks.json')).body as JSONWebKeySet;
		expect(later.keys.map((k) => k.kid)).not.toContain(oldKid);
	});

	function me(t: string) {
		return request(app).get('/api/v1/me').set(bearer(t));
	}
});
