// Helpers for intake tests: send a file as a batch, wait for the worker, read the database directly.
import { randomUUID } from 'node:crypto';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import pg from 'pg';
import request from 'supertest';
import { expect } from 'vitest';
import { appHandler, bearer, ROOT } from './app';

export const DEMO_DIR = path.join(ROOT, 'seeds', 'demo');
export const XLSX_TYPE = 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet';

export function demoFile(name: string): Buffer {
	return readFileSync(path.join(DEMO_DIR, name));
}

export interface SendOptions {
	mode?: 'check' | 'all' | 'valid';
	contentType?: string;
	key?: string | null;
	district?: string;
	fileName?: string;
	sheet?: string;
	/** `events`: an upkeep-events batch (`type=events`); default practice records. */
	type?: 'records' | 'events';
}

type Target = Parameters<typeof request>[0];

/** POSTs a body as a batch; returns the supertest response. */
export async function sendBatch(token: string, body: Buffer | string, opts: SendOptions = {}, target?: Target) {
	const mode = opts.mode ?? 'check';
	const q = new URLSearchParams({ mode });
	if (opts.type) q.set('type', opts.type);
	if (opts.district) q.set('district', opts.district);
	if (opts.sheet) q.set('sheet', opts.sheet);
	let req = request(target ?? (await appHandler()))
		.post(`/api/v1/batches?${q}`)
		.set(bearer(token))
		.set('content-type', opts.contentType ?? 'text/csv');
	const key = opts.key === undefined ? (mode === 'check' ? null : randomUUID()) : opts.key;
	if (key) req = req.set('idempotency-key', key);
	if (opts.fileName) req = req.set('content-disposition', `attachment; filename="${opts.fileName}"`);
	// The bytes go as they are: superagent would otherwise JSON-encode a Buffer sent as application/json.
	return req.serialize((d: unknown) => d as string).send(body);
}

export interface BatchBody {
	id: string;
	status: string;
	mode: string;
	valid: boolean | null;
	committed: boolean;
	counts: Record<string, number>;
	progress: { rows_done: number };
	findings_by_code: Record<string, number>;
	failure: string | null;
	[k: string]: unknown;
}

/** Polls GET /api/v1/batches/{id} until the batch is done or failed. */
export async function waitForBatch(token: string, id: string, target?: Target, timeoutMs = 60_000): Promise<BatchBody> {
	const started = Date.now();
	const h = target ?? (await appHandler());
	for (;;) {
		const res = await request(h).get(`/api/v1/batches/${id}`).set(bearer(token));
		expect(res.status, JSON.stringify(res.body)).toBe(200);
		if (res.body.status === 'done' || res.body.status === 'failed') return res.body as BatchBody;
		if (Date.now() - started > timeoutMs) throw new Error(`batch ${id} still ${res.body.status} after ${timeoutMs} ms`);
		await new Promise((r) => setTimeout(r, 200));
	}
}

/** Sends and waits: the finished batch. */
export async function runBatch(token: string, body: Buffer | string, opts: SendOptions = {}): Promise<BatchBody> {
	const res = await sendBatch(token, body, opts);
	expect(res.status, JSON.stringify(res.body)).toBe(202);
	return waitForBatch(token, res.body.id);
}

export interface FindingBody {
	seq: number;
	code: string;
	severity: 'error' | 'warning';
	row: number | null;
	column: string | null;
	column_number: number | null;
	cell: string | null;
	value: string | null;
	message: string;
}

/** All findings of a batch, following the cursor pages. */
export async function allFindings(token: string, id: string): Promise<FindingBody[]> {
	const h = await appHandler();
	const out: FindingBody[] = [];
	let url: string | null = `/api/v1/batches/${id}/findings?limit=200`;
	while (url) {
		const res: request.Response = await request(h).get(url).set(bearer(token));
		expect(res.status).toBe(200);
		out.push(...res.body.data);
		url = res.body.next;
	}
	return out;
}

let client: pg.Client | undefined;
/** A direct connection to the test database, for checking what was (not) written. */
export async function db(): Promise<pg.Client> {
	if (!client) {
		client = new pg.Client({ connectionString: process.env.DATABASE_URL });
		await client.connect();
	}
	return client;
}
export async function closeTestDb(): Promise<void> {
	await client?.end();
	client = undefined;
}

export async function count(sqlText: string, params: unknown[] = []): Promise<number> {
	const r = await (await db()).query<{ n: string }>(sqlText, params);
	return Number(r.rows[0].n);
}

/** A CSV of the given rows with exactly the given header. */
export function csv(header: string[], rows: Array<Array<string | number | null>>): string {
	const cell = (v: string | number | null) => {
		const s = v === null ? '' : String(v);
		return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
	};
	return [header, ...rows].map((r) => r.map(cell).join(',')).join('\n') + '\n';
}

/** A unique prefix for local ids, so tests never collide with each other or with the demo data. */
export function uniquePrefix(tag: string): string {
	return `${tag}-${Date.now().toString(36)}-${Math.floor(Math.random() * 1e6).toString(36)}`.toUpperCase();
}

/** Bluestem Hills (BLH, the `district` demo token) serves these; Kettle Prairie (KTP) serves others. */
export const BLH_COUNTY = '19109';
export const KTP_COUNTY = '19033';
export const BASIC_HEADER = [
	'local_id',
	'practice_code',
	'county_fips',
	'installed_on',
	'status',
	'withdrawn_on',
	'extent_acres',
	'drainage_area_acres'
];
