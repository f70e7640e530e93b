import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { appHandler, bearer, DEMO_TOKENS } from '../helpers/app';

describe('GET /api/v1/me with bearer tokens', () => {
	for (const [who, role] of [
		['admin', 'admin'],
		['manager', 'manager'],
		['district', 'district'],
		['district2', 'district'],
		['researcher', 'researcher']
	] as const) {
		it(`the ${who} demo token names the ${role} role`, async () => {
			const res = await request(await appHandler())
				.get('/api/v1/me')
				.set(bearer(DEMO_TOKENS[who]));
			expect(res.status).toBe(200);
			expect(res.body.role).toBe(role);
			expect(res.body.kind).toBe('token');
			if (role === 'district') expect(res.body.district_id).toEqual(expect.any(Number));
			else expect(res.body.district_id).toBeNull();
		});
	}

	it('the two district tokens belong to different districts', async () => {
		const h = await appHandler();
		const a = await request(h).get('/api/v1/me').set(bearer(DEMO_TOKENS.district));
		const b = await request(h).get('/api/v1/me').set(bearer(DEMO_TOKENS.district2));
		expect(a.body.district_id).not.toBe(b.body.district_id);
	});

	it('no token → 401 problem+json with WWW-Authenticate: Bearer', async () => {
		const res = await request(await appHandler()).get('/api/v1/me');
		expect(res.status).toBe(401);
		expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
		expect(res.headers['www-authenticate']).toMatch(/^Bearer/);
	});

	it('an unknown token → 401 invalid_token', async () => {
		const res = await request(await appHandler())
			.get('/api/v1/me')
			.set(bearer('rnl_not_a_real_token'));
		expect(res.status).toBe(401);
		expect(res.headers['www-authenticate']).toContain('error="invalid_token"');
	});
});
