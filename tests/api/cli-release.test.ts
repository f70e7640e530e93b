// `runnel release verify`: a release folder verifies with only the public key set; one changed byte in
// any file or in the manifest fails (exit 1). The dataset area is not built yet, so the test makes and
// signs its own release with a jose key pair, in the manifest shape of src/lib/schema/release-manifest.ts.
import { createHash } from 'node:crypto';
import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { CompactSign, exportJWK, generateKeyPair } from 'jose';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { MANIFEST_JSON_FILE, MANIFEST_JWS_FILE, type ReleaseManifest } from '../../src/lib/schema/release-manifest';
import { runCli } from '../helpers/cli';

const FILES: Record<string, string> = {
	'dataset.csv': 'pseudonym,practice_code,county_fips\nab12,605,19109\ncd34,340,19063\n',
	'dataset.ndjson': '{"pseudonym":"ab12","practice_code":"605"}\n{"pseudonym":"cd34","practice_code":"340"}\n',
	'docs/README.md': '# Release 2027.1\nSuggested citation: …\n'
};

let jwksFile: string;
let otherJwksFile: string;
let sign: (payload: string) => Promise<string>;
let jwks: unknown;
let hub: http.Server;
let hubUrl: string;
const tmp = mkdtempSync(path.join(os.tmpdir(), 'runnel-release-'));

function manifestFor(files: Record<string, string>): ReleaseManifest {
	return {
		version: '2027.1',
		files: Object.entries(files).map(([name, text]) => ({
			name,
			bytes: Buffer.byteLength(text),
			sha256: createHash('sha256').update(text).digest('hex')
		}))
	};
}

async function makeRelease(name: string, files = FILES): Promise<{ dir: string; jws: string; manifest: string }> {
	const dir = path.join(tmp, name);
	for (const [f, text] of Object.entries(files)) {
		mkdirSync(path.dirname(path.join(dir, f)), { recursive: true });
		writeFileSync(path.join(dir, f), text);
	}
	const manifest = JSON.stringify(manifestFor(files));
	const jws = await sign(manifest);
	writeFileSync(path.join(dir, MANIFEST_JWS_FILE), jws);
	writeFileSync(path.join(dir, MANIFEST_JSON_FILE), JSON.stringify(JSON.parse(manifest), null, 2));
	return { dir, jws, manifest };
}

beforeAll(async () => {
	const { publicKey, privateKey } = await generateKeyPair('ES256', { extractable: true });
	const pub = { ...(await exportJWK(publicKey)), kid: 'release-2027', alg: 'ES256', use: 'sig' };
	jwks = { keys: [pub] };
	sign = (payload) =>
		new CompactSign(new TextEncoder().encode(payload)).setProtectedHeader({ alg: 'ES256', kid: 'release-2027' }).sign(privateKey);
	jwksFile = path.join(tmp, 'jwks.json');
	writeFileSync(jwksFile, JSON.stringify(jwks));
	const other = await generateKeyPair('ES256', { extractable: true });
	otherJwksFile = path.join(tmp, 'other-jwks.json');
	writeFileSync(otherJwksFile, JSON.stringify({ keys: [{ ...(await exportJWK(other.publicKey)), kid: 'release-2027', alg: 'ES256' }] }));

	// A stand-in hub serving the public key set and one published release (the contract the CLI expects).
	const release = await makeRelease('served');
	hub = http.createServer((req, res) => {
		const u = req.url ?? '';
		if (u === '/.well-known/jwks.json') {
			res.writeHead(200, { 'content-type': 'application/jwk-set+json' });
			return res.end(JSON.stringify(jwks));
		}
		if (u === '/api/v1/dataset/releases/2027.1') {
			res.writeHead(200, { 'content-type': 'application/json' });
			return res.end(JSON.stringify({ version: '2027.1', manifest_jws: release.jws }));
		}
		const m = /^\/api\/v1\/dataset\/releases\/2027\.1\/files\/(.+)$/.exec(u);
		if (m) {
			const name = m[1].split('/').map(decodeURIComponent).join('/');
			let text = FILES[name];
			if (text !== undefined && req.headers.authorization === 'Bearer rnl_tamper' && name === 'dataset.csv')
				text = text.replace('605', '606');
			if (text !== undefined) {
				res.writeHead(200, { 'content-type': 'application/octet-stream' });
				return res.end(text);
			}
		}
		res.writeHead(404, { 'content-type': 'application/problem+json' });
		res.end(JSON.stringify({ status: 404, title: 'Not found' }));
	});
	await new Promise<void>((r) => hub.listen(0, '127.0.0.1', r));
	hubUrl = `http://127.0.0.1:${(hub.address() as AddressInfo).port}`;
});

afterAll(async () => {
	hub.closeAllConnections();
	await new Promise((r) => hub.close(r));
	rmSync(tmp, { recursive: true, force: true });
});

describe('runnel release verify DIR', () => {
	it('a genuine release verifies with only the public key set (exit 0)', async () => {
		const { dir } = await makeRelease('genuine');
		const r = await runCli(['release', 'verify', dir, '--jwks', jwksFile]);
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout).toContain('release 2027.1: signature ok (ES256, key release-2027');
		expect(r.stdout).toContain('verified: 3 of 3 files match the signed manifest');
	});

	it('the key set can come from the hub (<url>/.well-known/jwks.json), no token needed', async () => {
		const { dir } = await makeRelease('from-hub');
		const r = await runCli(['release', 'verify', dir, '--json'], { env: { RUNNEL_URL: hubUrl } });
		expect(r.code, r.stderr).toBe(0);
		const out = JSON.parse(r.stdout);
		expect(out).toMatchObject({
			ok: true,
			version: '2027.1',
			alg: 'ES256',
			kid: 'release-2027',
			keys_from: `${hubUrl}/.well-known/jwks.json`,
			plain_manifest_matches: true
		});
		expect(out.files.map((f: { status: string }) => f.status)).toEqual(['ok', 'ok', 'ok']);
	});

	it('one changed byte in any file fails (exit 1) and names the file', async () => {
		for (const name of Object.keys(FILES)) {
			const { dir } = await makeRelease(`flip-${name.replace('/', '_')}`);
			const p = path.join(dir, name);
			const bytes = readFileSync(p);
			bytes[5] ^= 0x01;
			writeFileSync(p, bytes);
			const r = await runCli(['release', 'verify', dir, '--jwks', jwksFile]);
			expect(r.code).toBe(1);
			expect(r.stdout).toMatch(new RegExp(`SHA-256 DIFFERS ${name.replace('.', '\\.')}`));
			expect(r.stdout).toContain('FAILED: 2 of 3 files match');
		}
	});

	it('a truncated file or a missing file fails', async () => {
		const { dir } = await makeRelease('short');
		writeFileSync(path.join(dir, 'dataset.csv'), FILES['dataset.csv'].slice(0, -1));
		rmSync(path.join(dir, 'dataset.ndjson'));
		const r = await runCli(['release', 'verify', dir, '--jwks', jwksFile]);
		expect(r.code).toBe(1);
		expect(r.stdout).toMatch(/SIZE DIFFERS dataset\.csv/);
		expect(r.stdout).toMatch(/MISSING dataset\.ndjson/);
	});

	it('one changed byte in the signed manifest fails the signature', async () => {
		const { dir, jws } = await makeRelease('bad-jws');
		const [h, p, s] = jws.split('.');
		const payload = Buffer.from(p, 'base64url');
		payload[payload.indexOf('2027.1') + 5] = '2'.charCodeAt(0); // 2027.1 → 2027.2
		writeFileSync(path.join(dir, MANIFEST_JWS_FILE), [h, payload.toString('base64url'), s].join('.'));
		const r = await runCli(['release', 'verify', dir, '--jwks', jwksFile]);
		expect(r.code).toBe(1);
		expect(r.stderr).toMatch(/signature does not verify/);
	});

	it('a changed plain manifest.json fails even though the JWS is intact', async () => {
		const { dir } = await makeRelease('bad-json');
		const p = path.join(dir, MANIFEST_JSON_FILE);
		writeFileSync(p, readFileSync(p, 'utf8').replace('"2027.1"', '"2027.9"'));
		const r = await runCli(['release', 'verify', dir, '--jwks', jwksFile]);
		expect(r.code).toBe(1);
		expect(r.stdout).toContain('manifest.json DIFFERS');
	});

	it('a manifest signed by another key is refused', async () => {
		const { dir } = await makeRelease('other-key');
		const r = await runCli(['release', 'verify', dir, '--jwks', otherJwksFile]);
		expect(r.code).toBe(1);
		expect(r.stderr).toMatch(/signature does not verify/);
	});

	it('a file the manifest does not list is pointed out (not covered by the signature)', async () => {
		const { dir } = await makeRelease('extra');
		writeFileSync(path.join(dir, 'notes.txt'), 'added later');
		const r = await runCli(['release', 'verify', dir, '--jwks', jwksFile]);
		expect(r.code).toBe(0);
		expect(r.stderr).toContain('notes.txt is not in the manifest');
	});
});

describe('runnel release verify VERSION (files streamed from the hub and hashed, not kept)', () => {
	it('verifies a published release', async () => {
		const r = await runCli(['release', 'verify', '2027.1'], { env: { RUNNEL_URL: hubUrl, RUNNEL_TOKEN: 'rnl_researcher' } });
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout).toContain('verified: 3 of 3 files');
	});

	it('a file the hub serves changed fails', async () => {
		const r = await runCli(['release', 'verify', '2027.1'], { env: { RUNNEL_URL: hubUrl, RUNNEL_TOKEN: 'rnl_tamper' } });
		expect(r.code).toBe(1);
		expect(r.stdout).toMatch(/SHA-256 DIFFERS dataset\.csv/);
	});
});
