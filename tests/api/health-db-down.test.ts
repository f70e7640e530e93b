// The database goes away and comes back: health answers 503 problem+json, the app keeps running,
// and it recovers without a restart. Runs on its own cluster so other tests are not disturbed.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { freePort, startCluster, type Cluster } from '../../scripts/lib/postgres';
import { ROOT } from '../helpers/app';

let dir: string;
let port: number;
let cluster: Cluster;
let handler: (req: unknown, res: unknown) => void;

beforeAll(async () => {
	dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-down-'));
	port = await freePort();
	cluster = await startCluster({ dir, port, database: 'runnel_down', log: () => {} });
	process.env.DATABASE_URL = cluster.url;
	const r = spawnSync(process.execPath, ['--import', 'tsx', 'scripts/migrate.ts'], { cwd: ROOT, env: process.env, encoding: 'utf8' });
	expect(r.status, r.stderr).toBe(0);
	handler = (await import(path.join(ROOT, 'build', 'handler.js'))).handler;
});

afterAll(() => {
	cluster?.stop();
	rmSync(dir, { recursive: true, force: true });
});

describe('database down and back', () => {
	it('answers 200, then 503 problem+json while down, then 200 again', async () => {
		expect((await request(handler).get('/api/v1/health')).status).toBe(200);

		cluster.stop();
		const down = await request(handler).get('/api/v1/health');
		expect(down.status).toBe(503);
		expect(down.headers['content-type']).toMatch(/^application\/problem\+json/);
		expect(down.body.detail).toMatch(/database/i);
		expect(down.headers['retry-after']).toBeTruthy();

		// The process is still serving other routes.
		expect((await request(handler).get('/api/v1/no-such')).status).toBe(404);

		cluster = await startCluster({ dir, port, database: 'runnel_down', log: () => {} });
		let status = 0;
		for (let i = 0; i < 20 && status !== 200; i++) {
			status = (await request(handler).get('/api/v1/health')).status;
			if (status !== 200) await new Promise((r) => setTimeout(r, 250));
		}
		expect(status).toBe(200);
	});
});
