// A crash in the middle of an `all` batch leaves nothing written, and the batch is re-run after restart.
// The app (web + in-process worker) runs as a child process on a database of its own, is killed with
// SIGKILL while it writes, then started again.
import { spawn, type ChildProcess } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { freePort } from '../../scripts/lib/postgres';
import { bearer, DEMO_TOKENS, ROOT } from '../helpers/app';
import { BLH_COUNTY } from '../helpers/batches';

const ROWS = 60_000;
const dbName = `runnel_crash_${process.pid}`;
let dbUrl: string;
let port: number;
let child: ChildProcess | undefined;

function adminUrl(): string {
	const u = new URL(process.env.DATABASE_URL!);
	u.pathname = '/postgres';
	return u.toString();
}

async function admin<T>(fn: (c: pg.Client) => Promise<T>): Promise<T> {
	const c = new pg.Client({ connectionString: adminUrl() });
	await c.connect();
	try {
		return await fn(c);
	} finally {
		await c.end();
	}
}

function runScript(script: string, env: NodeJS.ProcessEnv): Promise<void> {
	return new Promise((resolve, reject) => {
		const p = spawn(process.execPath, ['--import', 'tsx', path.join(ROOT, script)], {
			cwd: ROOT,
			env,
			stdio: ['ignore', 'ignore', 'pipe']
		});
		let err = '';
		p.stderr!.on('data', (d) => (err += d));
		p.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(`${script} failed: ${err}`))));
	});
}

function childEnv(): NodeJS.ProcessEnv {
	return {
		...process.env,
		DATABASE_URL: dbUrl,
		HOST: '127.0.0.1',
		PORT: String(port),
		ORIGIN: `http://127.0.0.1:${port}`,
		BODY_SIZE_LIMIT: 'Infinity',
		RUNNEL_DEMO: '1',
		NODE_ENV: 'production',
		LOG_LEVEL: 'silent',
		BATCH_STALE_SECONDS: '2',
		QUEUE_POLL_SECONDS: '1'
	};
}

async function startChild(): Promise<string> {
	child = spawn(process.execPath, [path.join(ROOT, 'build', 'index.js')], { cwd: ROOT, env: childEnv(), stdio: 'ignore' });
	const origin = `http://127.0.0.1:${port}`;
	for (let i = 0; i < 200; i++) {
		try {
			const r = await fetch(`${origin}/api/v1/health`);
			if (r.ok) return origin;
		} catch {
			/* not yet listening */
		}
		await new Promise((r) => setTimeout(r, 100));
	}
	throw new Error('the child app did not start');
}

function bigCsv(prefix: string): Buffer {
	const lines = ['local_id,practice_code,county_fips,installed_on,extent_acres,drainage_area_acres,cost_total_usd,cost_share_usd'];
	for (let i = 0; i < ROWS; i++) {
		const edge = i % 5 === 0;
		lines.push(
			`${prefix}-${i},${edge ? '605' : '340'},${BLH_COUNTY},2024-0${1 + (i % 9)}-1${i % 9},${edge ? '' : 20 + (i % 100)},${edge ? 30 + (i % 50) : ''},${1000 + i},${500 + i}`
		);
	}
	return Buffer.from(lines.join('\n') + '\n');
}

beforeAll(async () => {
	await admin((c) => c.query(`create database ${dbName}`));
	const u = new URL(process.env.DATABASE_URL!);
	u.pathname = `/${dbName}`;
	dbUrl = u.toString();
	const env = { ...process.env, DATABASE_URL: dbUrl, RUNNEL_DEMO: '1' };
	await runScript('scripts/migrate.ts', env);
	await runScript('scripts/seed.ts', env);
	port = await freePort();
}, 180_000);

afterAll(async () => {
	child?.kill('SIGKILL');
	await new Promise((r) => setTimeout(r, 300));
	await admin((c) => c.query(`drop database if exists ${dbName} with (force)`));
});

describe('kill -9 during an all batch', () => {
	it('leaves no row of the batch in the database; after a restart the batch is re-run and succeeds', async () => {
		let origin = await startChild();
		const prefix = `CRASH${Date.now().toString(36)}`.toUpperCase();
		const key = randomUUID();
		const body = bigCsv(prefix);
		const post = () =>
			request(origin)
				.post('/api/v1/batches?mode=all')
				.set(bearer(DEMO_TOKENS.district))
				.set('content-type', 'text/csv')
				.set('idempotency-key', key)
				.send(body);
		const res = await post();
		expect(res.status, JSON.stringify(res.body)).toBe(202);
		const id = res.body.id as string;

		// Wait until the worker is visibly in the middle of the batch, then kill the whole app.
		for (let i = 0; ; i++) {
			const b = await request(origin).get(`/api/v1/batches/${id}`).set(bearer(DEMO_TOKENS.district));
			expect(b.body.status, 'the batch finished before it could be interrupted').not.toBe('done');
			if (b.body.status === 'checking' && b.body.progress.rows_done > 2000) break;
			if (i > 600) throw new Error('the batch never started');
			await new Promise((r) => setTimeout(r, 50));
		}
		child!.kill('SIGKILL');
		await new Promise((r) => child!.once('exit', r));

		const c = new pg.Client({ connectionString: dbUrl });
		await c.connect();
		try {
			const q = async (text: string, params: unknown[] = []) => Number((await c.query(text, params)).rows[0].n);
			// Give PostgreSQL a moment to notice the dead connections and roll their transaction back.
			await new Promise((r) => setTimeout(r, 500));
			expect(await q(`select count(*) as n from records where local_id like $1`, [`${prefix}-%`])).toBe(0);
			expect(await q(`select count(*) as n from record_versions where batch_id = $1`, [id])).toBe(0);
			const status = (await c.query(`select status, committed_at from batches where id = $1`, [id])).rows[0];
			expect(status.status).toBe('checking');
			expect(status.committed_at).toBeNull();

			// Restart after the stale period: the worker takes the batch up again and finishes it.
			await new Promise((r) => setTimeout(r, 2500));
			origin = await startChild();
			let done: { status: string; committed: boolean; counts: Record<string, number> } | undefined;
			for (let i = 0; i < 1200; i++) {
				const b = await request(origin).get(`/api/v1/batches/${id}`).set(bearer(DEMO_TOKENS.district));
				if (b.body.status === 'done' || b.body.status === 'failed') {
					done = b.body;
					break;
				}
				await new Promise((r) => setTimeout(r, 100));
			}
			expect(done?.status).toBe('done');
			expect(done?.committed).toBe(true);
			expect(done?.counts).toMatchObject({ rows: ROWS, accepted: ROWS, created: ROWS, rejected: 0 });
			expect(await q(`select count(*) as n from records where local_id like $1`, [`${prefix}-%`])).toBe(ROWS);
			expect(await q(`select count(*) as n from record_versions where batch_id = $1`, [id])).toBe(ROWS);
			// The client's retry with the same key gets the same batch, not a second one.
			const retry = await post();
			expect(retry.status).toBe(202);
			expect(retry.body.id).toBe(id);
			expect(await q(`select count(*) as n from batches where sha256 = $1`, [res.body.sha256])).toBe(1);
		} finally {
			await c.end();
		}
	}, 240_000);
});
