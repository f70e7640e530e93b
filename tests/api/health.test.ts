import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { appHandler } from '../helpers/app';

describe('platform basics', () => {
	it('GET /api/v1/health answers 200 ok with the version and current migrations', async () => {
		const res = await request(await appHandler()).get('/api/v1/health');
		expect(res.status).toBe(200);
		expect(res.body.status).toBe('ok');
		expect(res.body.database).toBe('ok');
		expect(res.body.migrations.current).toBe(true);
		expect(res.body.migrations.shipped).toBeGreaterThan(0);
		expect(res.body.version).toMatch(/^\d+\.\d+\.\d+/);
		expect(res.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
	});

	it('echoes a sane incoming X-Request-Id', async () => {
		const res = await request(await appHandler())
			.get('/api/v1/health')
			.set('X-Request-Id', 'script-run-000123');
		expect(res.headers['x-request-id']).toBe('script-run-000123');
	});

	it('unknown /api/v1 path → 404 application/problem+json with the request id as instance', async () => {
		const res = await request(await appHandler()).get('/api/v1/no-such-thing');
		expect(res.status).toBe(404);
		expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
		expect(res.body).toMatchObject({ type: 'about:blank', status: 404, title: 'Not found' });
		expect(res.body.instance).toBe(`urn:uuid:${res.headers['x-request-id']}`);
	});

	it('a wrong method on a known route → 405 problem+json', async () => {
		const res = await request(await appHandler()).delete('/api/v1/health');
		expect(res.status).toBe(405);
		expect(res.headers['content-type']).toMatch(/^application\/problem\+json/);
	});

	it('unknown page → friendly HTML 404', async () => {
		const res = await request(await appHandler())
			.get('/no-such-page')
			.set('Accept', 'text/html');
		expect(res.status).toBe(404);
		expect(res.text).toContain('Page not found');
	});

	it('security headers are set', async () => {
		const res = await request(await appHandler()).get('/');
		expect(res.headers['x-content-type-options']).toBe('nosniff');
		expect(res.headers['referrer-policy']).toBeTruthy();
	});
});
