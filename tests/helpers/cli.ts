// Runs the real `runnel` command (node cli/bin.js …) as a child process, as a district's script would.
import { spawn } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { ROOT } from './app';

export const CLI = path.join(ROOT, 'cli', 'bin.js');

export interface CliResult {
	code: number | null;
	stdout: string;
	stderr: string;
	stdoutBytes: Buffer;
}

export interface CliRun {
	/** Extra environment (merged over a clean one: no RUNNEL_* from the test runner leaks in). */
	env?: Record<string, string | undefined>;
	/** Written to stdin, then stdin is closed. Without it stdin is closed at once. */
	input?: string | Buffer;
	cwd?: string;
	timeoutMs?: number;
}

/** A fresh, empty XDG config folder, so no test reads another's (or the developer's) config. */
export function freshConfigHome(): string {
	return mkdtempSync(path.join(os.tmpdir(), 'runnel-cli-config-'));
}

export function runCli(args: string[], opts: CliRun = {}): Promise<CliResult> {
	const env: Record<string, string> = {};
	for (const [k, v] of Object.entries(process.env)) if (v !== undefined && !k.startsWith('RUNNEL_') && k !== 'NO_COLOR') env[k] = v;
	// Short retry waits in tests; the schedule itself is unit-tested.
	env.RUNNEL_RETRY_BASE_MS = '20';
	env.RUNNEL_RETRY_MAX_MS = '100';
	for (const [k, v] of Object.entries(opts.env ?? {})) {
		if (v === undefined) delete env[k];
		else env[k] = v;
	}
	env.XDG_CONFIG_HOME ??= freshConfigHome();
	return new Promise((resolve, reject) => {
		const child = spawn(process.execPath, [CLI, ...args], { cwd: opts.cwd ?? ROOT, env, stdio: ['pipe', 'pipe', 'pipe'] });
		const out: Buffer[] = [];
		const err: Buffer[] = [];
		child.stdout.on('data', (b: Buffer) => out.push(b));
		child.stderr.on('data', (b: Buffer) => err.push(b));
		const timer = setTimeout(() => {
			child.kill('SIGKILL');
			reject(new Error(`runnel ${args.join(' ')} did not finish within ${opts.timeoutMs ?? 60_000} ms\n${Buffer.concat(err).toString()}`));
		}, opts.timeoutMs ?? 60_000);
		child.on('error', reject);
		child.on('close', (code) => {
			clearTimeout(timer);
			const stdoutBytes = Buffer.concat(out);
			resolve({ code, stdout: stdoutBytes.toString('utf8'), stderr: Buffer.concat(err).toString('utf8'), stdoutBytes });
		});
		child.stdin.on('error', () => {});
		if (opts.input !== undefined) child.stdin.end(opts.input);
		else child.stdin.end();
	});
}
