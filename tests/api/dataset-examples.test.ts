// The copy-paste examples of the /dataset page, run as written against the real hub: curl downloads a
// release, openssl verifies its ES256 signature with only the public JWKS and sha256sum checks every file;
// one changed byte in a file or in the manifest makes the same script fail. The live curl example
// returns the same CSV as the API.
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { liveExamples, releaseExamples } from '$lib/dataset-examples';
import { closeDb, getDb } from '$lib/server/db';
import { getActiveMethodVersion } from '$lib/server/methods';
import { rebuildMethod } from '$lib/server/rollups/refresh';
import { DEMO_TOKENS, startApp } from '../helpers/app';

process.env.ROLLUP_POLL_MS = '3600000';
const VERSION = '2093.1';
let app: { origin: string; close: () => Promise<void> };
const tmp = mkdtempSync(path.join(os.tmpdir(), 'runnel-dataset-examples-'));

/** Runs a script with bash (asynchronously: the hub answers from this same process). */
function sh(code: string, cwd: string): Promise<{ code: number | null; out: string }> {
	return new Promise((resolve, reject) => {
		const child = spawn('bash', ['-c', `set -eo pipefail\n${code}`], {
			cwd,
			env: { ...process.env, RUNNEL_TOKEN: DEMO_TOKENS.researcher }
		});
		let out = '';
		child.stdout.on('data', (b: Buffer) => (out += b.toString()));
		child.stderr.on('data', (b: Buffer) => (out += b.toString()));
		const timer = setTimeout(() => child.kill('SIGKILL'), 60_000);
		child.on('error', reject);
		child.on('close', (c) => {
			clearTimeout(timer);
			resolve({ code: c, out });
		});
	});
}
const example = (id: string) => releaseExamples(app.origin, VERSION).find((e) => e.id === id)!.code;

beforeAll(async () => {
	for (const tool of ['curl', 'openssl', 'jq', 'xxd', 'sha256sum', 'cmp'])
		expect(spawnSync('bash', ['-c', `command -v ${tool}`]).status, `${tool} is needed to run the examples`).toBe(0);
	app = await startApp();
	await rebuildMethod(getDb(), await getActiveMethodVersion(getDb()));
	const res = await fetch(`${app.origin}/api/v1/dataset/releases`, {
		method: 'POST',
		headers: { authorization: `Bearer ${DEMO_TOKENS.manager}`, 'content-type': 'application/json' },
		body: JSON.stringify({ version: VERSION })
	});
	expect(res.status, await res.clone().text()).toBe(201);
}, 120_000);
afterAll(async () => {
	await app?.close();
	await closeDb();
});

describe('release examples', () => {
	it('curl downloads the release; openssl + sha256sum verify it; one changed byte anywhere fails', async () => {
		const dl = await sh(example('curl-release'), tmp);
		expect(dl.code, dl.out).toBe(0);
		const dir = path.join(tmp, `runnel-dataset-${VERSION}`);
		const verify = example('openssl-verify');
		const ok = await sh(verify, dir);
		expect(ok.code, ok.out).toBe(0);
		expect(ok.out).toContain('Verified OK');
		expect(ok.out).toContain('release verified');
		expect(ok.out).toMatch(/dataset\.csv: OK/);
		expect(ok.out).toMatch(/dataset\.xlsx: OK/);

		for (const name of ['dataset.xlsx', 'README.md', 'manifest.json', 'manifest.jws']) {
			const file = path.join(dir, name);
			const original = readFileSync(file);
			const changed = Buffer.from(original);
			const at = name === 'manifest.jws' ? changed.length - 3 : Math.floor(changed.length / 3);
			changed[at] = changed[at] === 0x41 ? 0x42 : 0x41;
			writeFileSync(file, changed);
			const bad = await sh(verify, dir);
			expect(bad.code, `${name} changed: ${bad.out}`).not.toBe(0);
			writeFileSync(file, original);
		}
		expect((await sh(verify, dir)).code).toBe(0);
	});
});

describe('live examples', () => {
	it('the curl example returns the live CSV with the filters it names', async () => {
		const code = liveExamples(app.origin).find((e) => e.id === 'curl-live')!.code;
		const r = await sh(code.replace(/^export RUNNEL_TOKEN=.*$/m, ''), tmp);
		expect(r.code, r.out).toBe(0);
		const csv = readFileSync(path.join(tmp, 'dataset-live.csv'), 'utf8');
		const api = await (
			await fetch(`${app.origin}/api/v1/dataset/records?fy=2026&practice=605&format=csv`, {
				headers: { authorization: `Bearer ${DEMO_TOKENS.researcher}` }
			})
		).text();
		expect(csv).toBe(api);
		expect(csv.split('\n')[0]).toMatch(/^pid,/);
	});
});
