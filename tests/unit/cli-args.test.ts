// Argument parsing of `runnel`: help with examples everywhere, documented exit codes, usage errors
// exit 3 before anything touches the network, global options anywhere on the line.
import { Readable, PassThrough } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { run } from '../../cli/program';
import { MANIFEST_JWS_NAME } from '../../cli/commands/release';
import { MANIFEST_JWS_FILE } from '../../src/lib/schema/release-manifest';
import { parseFyRange } from '../../cli/fiscal-years';
import type { Io } from '../../cli/output';

function fakeIo(env: NodeJS.ProcessEnv = {}) {
	const stdout = new PassThrough();
	const stderr = new PassThrough();
	let out = '';
	let err = '';
	stdout.on('data', (b) => (out += b));
	stderr.on('data', (b) => (err += b));
	const io: Io = {
		stdout,
		stderr,
		stdin: Readable.from([]),
		env: { XDG_CONFIG_HOME: '/nonexistent-runnel-test', ...env },
		cwd: process.cwd()
	};
	return { io, out: () => out, err: () => err };
}

async function cli(args: string[], env?: NodeJS.ProcessEnv) {
	const f = fakeIo(env);
	const code = await run(args, f.io);
	return { code, stdout: f.out(), stderr: f.err() };
}

const COMMANDS = [
	['login'],
	['whoami'],
	['check'],
	['upload'],
	['batches'],
	['records'],
	['export'],
	['export', 'records'],
	['export', 'rollups'],
	['export', 'dataset'],
	['schema'],
	['release', 'verify']
];

describe('help and version', () => {
	it('--help exits 0 on stdout and documents every exit code', async () => {
		const r = await cli(['--help']);
		expect(r.code).toBe(0);
		for (const line of ['0  success', '1  error', '2  rows rejected', '3  usage', '4  authentication']) expect(r.stdout).toContain(line);
		expect(r.stderr).toBe('');
	});

	it.each(COMMANDS)('`runnel %s … --help` shows examples', async (...cmd) => {
		const r = await cli([...cmd.filter(Boolean), '--help']);
		expect(r.code).toBe(0);
		expect(r.stdout).toMatch(/Examples:\n\s+\$ runnel /);
	});

	it('--version prints the package version', async () => {
		const r = await cli(['--version']);
		expect(r.code).toBe(0);
		expect(r.stdout.trim()).toMatch(/^\d+\.\d+\.\d+/);
	});

	it('no command at all is a usage error (3) with help on stderr', async () => {
		const r = await cli([]);
		expect(r.code).toBe(3);
		expect(r.stderr).toContain('Usage: runnel');
	});
});

describe('usage errors exit 3 without touching the network', () => {
	const env = { RUNNEL_URL: 'http://127.0.0.1:9', RUNNEL_TOKEN: 'rnl_x' };
	it.each([
		[['bogus']],
		[['whoami', '--frobnicate']],
		[['upload']],
		[['upload', '--mode', 'sometimes', 'a.csv']],
		[['--timeout', '0', 'whoami']],
		[['--timeout', 'soon', 'whoami']],
		[['--retries', '-1', 'whoami']],
		[['export', 'rollups', '--fy', '2027..2020']],
		[['export', 'records', '--fy', '20x7']],
		[['export', 'records', '--format', 'pdf']],
		[['upload', '--idempotency-key', 'night-1', 'a.csv', 'b.csv']],
		[['upload', '--idempotency-key', 'has space', 'a.csv']],
		[['upload', 'practices.pdf']],
		[['upload', '-']],
		[['batches', 'seventeen']],
		[['records', 'abc']]
	])('runnel %j', async (args) => {
		const r = await cli(args, env);
		expect(r.code).toBe(3);
		expect(r.stderr.length).toBeGreaterThan(0);
		expect(r.stderr).not.toMatch(/ECONNREFUSED|cannot reach/);
	});

	it('no hub URL anywhere is a usage error naming the three ways to give one', async () => {
		const r = await cli(['whoami'], { RUNNEL_TOKEN: 'rnl_x' });
		expect(r.code).toBe(3);
		expect(r.stderr).toMatch(/--url.*RUNNEL_URL.*runnel login/);
	});

	it('no token anywhere is exit 4', async () => {
		const r = await cli(['whoami'], { RUNNEL_URL: 'http://127.0.0.1:9' });
		expect(r.code).toBe(4);
		expect(r.stderr).toMatch(/No token/);
	});

	it('global options are understood after the command too', async () => {
		// --url after the command wins over RUNNEL_URL: the usage error about a missing URL goes away and
		// the (closed) port of --url is the one tried.
		const r = await cli(['whoami', '--retries', '0', '--url', 'http://127.0.0.1:9', '--json'], {
			RUNNEL_TOKEN: 'rnl_x',
			RUNNEL_URL: 'http://127.0.0.1:8'
		});
		expect(r.code).toBe(1);
		expect(r.stderr).toContain('127.0.0.1:9');
		expect(r.stderr).not.toContain('127.0.0.1:8');
	});
});

describe('fiscal-year ranges', () => {
	it('reads one year or an inclusive range', () => {
		expect(parseFyRange('2027')).toEqual({ from: 2027, to: 2027 });
		expect(parseFyRange('2020..2027')).toEqual({ from: 2020, to: 2027 });
	});
	it('refuses reversed, malformed and absurd ranges', () => {
		for (const v of ['2027..2020', '2020-2027', '27', '2020..', '1800..1900', '']) expect(() => parseFyRange(v)).toThrow();
	});
});

it("the release command's manifest name is the shared schema's", () => {
	expect(MANIFEST_JWS_NAME).toBe(MANIFEST_JWS_FILE);
});
