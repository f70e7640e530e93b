// The CLI against the real hub: `runnel release verify VERSION` and `runnel release verify DIR` check a
// release the hub itself published (its manifest in the shape of src/lib/schema/release-manifest.ts,
// signed with the hub's key, public key from /.well-known/jwks.json); one changed byte fails (exit 1).
// `runnel export dataset` streams the same bytes as the live API.
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { HubReleaseManifest, MANIFEST_JSON_FILE, MANIFEST_JWS_FILE, ReleaseManifest } from '$lib/schema/release-manifest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { runCli } from '../helpers/cli';

process.env.ROLLUP_POLL_MS = '3600000';
const VERSION = '2092.1';
let app: { origin: string; close: () => Promise<void> };
const tmp = mkdtempSync(path.join(os.tmpdir(), 'runnel-dataset-cli-'));
const env = (token: string) => ({ RUNNEL_URL: app.origin, RUNNEL_TOKEN: token });

async function get(p: string, token: string = DEMO_TOKENS.researcher): Promise<Response> {
	const res = await fetch(`${app.origin}${p}`, { headers: { authorization: `Bearer ${token}` } });
	expect(res.status, p).toBe(200);
	return res;
}

beforeAll(async () => {
	app = await startApp();
	await rebuildMethod(getDb(), await getActiveMethodVersion(getDb()));
	const res = await fetch(`${app.origin}/api/v1/dataset/releases`, {
		method: 'POST',
		headers: { authorization: `Bearer ${DEMO_TOKENS.manager}`, 'content-type': 'application/json' },
		body: JSON.stringify({ version: VERSION, notes: 'Published by the CLI test.' })
	});
	expect(res.status, await res.clone().text()).toBe(201);
}, 120_000);
afterAll(async () => {
	await app?.close();
	await closeDb();
});

describe('the release manifest has one shape', () => {
	it('the hub signs exactly the shared schema (strict), which the CLI schema accepts', async () => {
		const info = (await (await get(`/api/v1/dataset/releases/${VERSION}`)).json()) as { manifest_jws: string };
		const payload = JSON.parse(Buffer.from(info.manifest_jws.split('.')[1], 'base64url').toString('utf8'));
		expect(HubReleaseManifest.safeParse(payload).success).toBe(true);
		expect(ReleaseManifest.safeParse(payload).success).toBe(true);
		expect(payload.version).toBe(VERSION);
	});
});

describe('runnel release verify', () => {
	it('verifies a release on the hub by version with the hub’s public keys only', async () => {
		const r = await runCli(['release', 'verify', VERSION, '--json'], { env: env(DEMO_TOKENS.researcher) });
		expect(r.code, r.stderr).toBe(0);
		const out = JSON.parse(r.stdout) as { ok: boolean; version: string; alg: string; files: { name: string; status: string }[] };
		expect(out.ok).toBe(true);
		expect(out.version).toBe(VERSION);
		expect(out.alg).toBe('ES256');
		expect(out.files.map((f) => f.name)).toEqual(expect.arrayContaining(['dataset.csv', 'dataset.ndjson', 'dataset.xlsx', 'README.md']));
		expect(out.files.every((f) => f.status === 'ok')).toBe(true);
	});

	it('verifies a downloaded folder offline; one changed byte in a file or in the manifest fails', async () => {
		const dir = path.join(tmp, 'release');
		const { mkdirSync } = await import('node:fs');
		mkdirSync(dir);
		const manifest = JSON.parse(await (await get(`/api/v1/dataset/releases/${VERSION}/files/${MANIFEST_JSON_FILE}`)).text()) as {
			files: { name: string }[];
		};
		for (const name of [...manifest.files.map((f) => f.name), MANIFEST_JSON_FILE, MANIFEST_JWS_FILE]) {
			const bytes = Buffer.from(await (await get(`/api/v1/dataset/releases/${VERSION}/files/${name}`)).arrayBuffer());
			writeFileSync(path.join(dir, name), bytes);
		}
		const jwks = path.join(tmp, 'jwks.json');
		writeFileSync(jwks, await (await fetch(`${app.origin}/.well-known/jwks.json`)).text());

		const ok = await runCli(['release', 'verify', dir, '--jwks', jwks]);
		expect(ok.code, ok.stdout + ok.stderr).toBe(0);
		expect(ok.stdout).toMatch(/verified: \d+ of \d+ files match/);

		// One byte of the CSV.
		const csvPath = path.join(dir, 'dataset.csv');
		const csv = readFileSync(csvPath);
		const changed = Buffer.from(csv);
		changed[Math.floor(changed.length / 2)] ^= 1;
		writeFileSync(csvPath, changed);
		const bad = await runCli(['release', 'verify', dir, '--jwks', jwks]);
		expect(bad.code).toBe(1);
		expect(bad.stdout).toMatch(/SHA-256 DIFFERS dataset\.csv/);
		writeFileSync(csvPath, csv);

		// One byte of the signed manifest's signature part.
		const jwsPath = path.join(dir, MANIFEST_JWS_FILE);
		const jws = readFileSync(jwsPath, 'utf8');
		const i = jws.length - 5;
		writeFileSync(jwsPath, jws.slice(0, i) + (jws[i] === 'A' ? 'B' : 'A') + jws.slice(i + 1));
		const badSig = await runCli(['release', 'verify', dir, '--jwks', jwks]);
		expect(badSig.code).toBe(1);
		expect(badSig.stderr).toMatch(/signature/);
		writeFileSync(jwsPath, jws);
		expect((await runCli(['release', 'verify', dir, '--jwks', jwks])).code).toBe(0);
	});

	it('a district token cannot read releases (403 insufficient_scope → exit 4, auth)', async () => {
		const r = await runCli(['release', 'verify', VERSION], { env: env(DEMO_TOKENS.district) });
		expect(r.code).toBe(4);
		expect(r.stderr).toMatch(/scope|403|not allowed|permission/i);
	});
});

describe('runnel export dataset', () => {
	it('writes the live dataset as CSV, the same bytes as the API', async () => {
		const out = path.join(tmp, 'live.csv');
		const r = await runCli(['export', 'dataset', '--fy', '2024..2026', '-o', out], { env: env(DEMO_TOKENS.researcher) });
		expect(r.code, r.stderr).toBe(0);
		const api = await (await get('/api/v1/dataset/records?fy=2024..2026&format=csv')).text();
		const file = readFileSync(out, 'utf8');
		expect(file.split('\n').length).toBeGreaterThan(10);
		expect(file).toBe(api);
		expect(file.split('\n')[0]).toMatch(/^pid,practice_code,/);
	});

	it('NDJSON with a single FY and a practice filter', async () => {
		const r = await runCli(['export', 'dataset', '--format', 'ndjson', '--fy', '2025', '--practice', '340'], {
			env: env(DEMO_TOKENS.researcher)
		});
		expect(r.code, r.stderr).toBe(0);
		const rows = r.stdout
			.trim()
			.split('\n')
			.filter(Boolean)
			.map((l) => JSON.parse(l) as { practice_code: string; fy_in_service_first: number; fy_in_service_last: number });
		expect(rows.length).toBeGreaterThan(0);
		for (const row of rows) {
			expect(row.practice_code).toBe('340');
			expect(row.fy_in_service_first).toBeLessThanOrEqual(2025);
			expect(row.fy_in_service_last).toBeGreaterThanOrEqual(2025);
		}
	});
});
