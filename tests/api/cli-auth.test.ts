// The real `runnel` command against the built app: login stores URL + token (mode 0600) and never
// echoes the token; whoami; token and URL precedence; a wrong token exits 4 with a one-line reason;
// a hub that is down exits 1 with a clear message after bounded retries.
import { spawn } from 'node:child_process';
import { readFileSync, statSync, writeFileSync, mkdtempSync } from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { CLI, freshConfigHome, runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };

beforeAll(async () => {
	app = await startApp();
});
afterAll(async () => {
	await app?.close();
});

async function closedPortUrl(): Promise<string> {
	const s = http.createServer();
	await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
	const url = `http://127.0.0.1:${(s.address() as AddressInfo).port}`;
	await new Promise((r) => s.close(r));
	return url;
}

describe('runnel login / whoami', () => {
	it('login reads the token from stdin, checks it, stores URL + token with mode 0600, never echoes it', async () => {
		const home = freshConfigHome();
		const r = await runCli(['login', '--url', app.origin], { env: { XDG_CONFIG_HOME: home }, input: `${DEMO_TOKENS.district}\n` });
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout + r.stderr).not.toContain(DEMO_TOKENS.district);
		expect(r.stderr).toContain('Mara Quillfeather');
		const file = path.join(home, 'runnel', 'config.json');
		expect(statSync(file).mode & 0o777).toBe(0o600);
		expect(JSON.parse(readFileSync(file, 'utf8'))).toMatchObject({ url: app.origin, token: DEMO_TOKENS.district });

		// whoami now works from the config alone.
		const w = await runCli(['whoami'], { env: { XDG_CONFIG_HOME: home } });
		expect(w.code, w.stderr).toBe(0);
		expect(w.stdout).toContain('district');
		expect(w.stdout).toContain('token: from the config file');
		expect(w.stdout).not.toContain(DEMO_TOKENS.district);
	});

	it('at a terminal, login asks for the token with echo off: the token never appears on the screen', async () => {
		// A pseudo-terminal from util-linux `script`, so stdin and stderr are TTYs as for a person typing.
		const home = freshConfigHome();
		const child = spawn('script', ['-qec', `${process.execPath} ${CLI} login --url ${app.origin}`, '/dev/null'], {
			env: { ...process.env, XDG_CONFIG_HOME: home, RUNNEL_TOKEN: '', RUNNEL_URL: '' }
		});
		let screen = '';
		let typed = false;
		child.stdout.on('data', (b: Buffer) => {
			screen += b.toString();
			if (!typed && screen.includes('API token (input hidden): ')) {
				typed = true;
				child.stdin.write(`${DEMO_TOKENS.district}\r`);
			}
		});
		const code = await new Promise<number | null>((r) => child.on('close', r));
		expect(code, screen).toBe(0);
		expect(typed).toBe(true);
		expect(screen).toContain('Logged in to');
		expect(screen).not.toContain(DEMO_TOKENS.district);
		expect(JSON.parse(readFileSync(path.join(home, 'runnel', 'config.json'), 'utf8')).token).toBe(DEMO_TOKENS.district);
	});

	it('login with a wrong token exits 4 and stores nothing', async () => {
		const home = freshConfigHome();
		const r = await runCli(['login', '--url', app.origin], { env: { XDG_CONFIG_HOME: home }, input: 'rnl_wrong' });
		expect(r.code).toBe(4);
		expect(() => statSync(path.join(home, 'runnel', 'config.json'))).toThrow();
	});

	it('login with nothing on stdin never hangs: exit 4, "No token in stdin"', async () => {
		const r = await runCli(['login', '--url', app.origin, '--no-input']);
		expect(r.code).toBe(4);
		expect(r.stderr).toMatch(/No token in stdin/);
	});

	it('whoami --json names the role and where the token came from', async () => {
		const r = await runCli(['whoami', '--json'], { env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.manager } });
		expect(r.code, r.stderr).toBe(0);
		expect(JSON.parse(r.stdout)).toMatchObject({ role: 'manager', token_source: 'env', url_source: 'env', hub: app.origin });
	});
});

describe('precedence (flags > environment > config)', () => {
	it('token: --token-file > RUNNEL_TOKEN > config; URL: --url > RUNNEL_URL > config', async () => {
		const home = freshConfigHome();
		const login = await runCli(['login', '--url', app.origin], { env: { XDG_CONFIG_HOME: home }, input: DEMO_TOKENS.district });
		expect(login.code, login.stderr).toBe(0);
		const role = async (args: string[], env: Record<string, string>) => {
			const r = await runCli(['whoami', '--json', ...args], { env: { XDG_CONFIG_HOME: home, ...env } });
			expect(r.code, r.stderr).toBe(0);
			return JSON.parse(r.stdout).role as string;
		};
		expect(await role([], {})).toBe('district');
		expect(await role([], { RUNNEL_TOKEN: DEMO_TOKENS.manager })).toBe('manager');
		const tokenFile = path.join(mkdtempSync(path.join(os.tmpdir(), 'runnel-tok-')), 'token');
		writeFileSync(tokenFile, DEMO_TOKENS.researcher + '\n', { mode: 0o600 });
		expect(await role(['--token-file', tokenFile], { RUNNEL_TOKEN: DEMO_TOKENS.manager })).toBe('researcher');

		// A dead RUNNEL_URL loses to --url; a dead --url wins over a live RUNNEL_URL.
		const dead = await closedPortUrl();
		expect(await role(['--url', app.origin], { RUNNEL_URL: dead })).toBe('district');
		const r = await runCli(['whoami', '--url', dead, '--retries', '0'], { env: { XDG_CONFIG_HOME: home, RUNNEL_URL: app.origin } });
		expect(r.code).toBe(1);
	});
});

describe('failures a nightly script must tell apart', () => {
	it('a wrong token → exit 4 and a one-line reason', async () => {
		const r = await runCli(['whoami'], { env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: 'rnl_not_a_real_token' } });
		expect(r.code).toBe(4);
		const lines = r.stderr.trim().split('\n');
		expect(lines).toHaveLength(1);
		expect(lines[0]).toMatch(/^error: the hub refused the token from RUNNEL_TOKEN \(HTTP 401\): .*(unknown|revoked|expired)/);
		expect(r.stdout).toBe('');
	});

	it('a token without the scope → exit 4 (403)', async () => {
		// The researcher has no records:read; listing records needs it.
		const r = await runCli(['records'], { env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.researcher } });
		expect(r.code).toBe(4);
		expect(r.stderr.trim()).toMatch(/^error: permission refused \(HTTP 403\): .*records:read/);
	});

	it('the hub is down → exit 1 with a clear message after bounded retries', async () => {
		const dead = await closedPortUrl();
		const started = Date.now();
		const r = await runCli(['whoami', '--retries', '3'], { env: { RUNNEL_URL: dead, RUNNEL_TOKEN: DEMO_TOKENS.district } });
		expect(r.code).toBe(1);
		expect(r.stderr).toContain(`error: cannot reach the hub at ${dead}: connection refused (ECONNREFUSED); gave up after 4 attempts`);
		// Three retry notices on stderr, then the error.
		expect(r.stderr.match(/retrying in/g)).toHaveLength(3);
		expect(Date.now() - started).toBeLessThan(30_000);
	});

	it('--quiet silences the retry notices but not the error', async () => {
		const dead = await closedPortUrl();
		const r = await runCli(['whoami', '--retries', '2', '--quiet'], { env: { RUNNEL_URL: dead, RUNNEL_TOKEN: DEMO_TOKENS.district } });
		expect(r.code).toBe(1);
		expect(r.stderr.trim().split('\n')).toHaveLength(1);
	});
});
