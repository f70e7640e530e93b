// Where the CLI writes: data on stdout, messages and progress on stderr (clig.dev). Colour only when
// the stream is a terminal and neither NO_COLOR nor TERM=dumb nor --no-color says otherwise.
import { once } from 'node:events';
import type { Readable, Writable } from 'node:stream';

export type OutStream = Writable & { isTTY?: boolean; columns?: number };
export type InStream = Readable & { isTTY?: boolean; setRawMode?: (mode: boolean) => unknown };

export interface Io {
	stdout: OutStream;
	stderr: OutStream;
	stdin: InStream;
	env: NodeJS.ProcessEnv;
	cwd: string;
}

export function processIo(): Io {
	return { stdout: process.stdout, stderr: process.stderr, stdin: process.stdin, env: process.env, cwd: process.cwd() };
}

/** True when colour and animation may be used on this stream. */
export function isInteractive(stream: OutStream, env: NodeJS.ProcessEnv, colorFlag = true): boolean {
	if (!colorFlag) return false;
	if (!stream.isTTY) return false;
	if (env.NO_COLOR !== undefined && env.NO_COLOR !== '') return false;
	if (env.TERM === 'dumb') return false;
	return true;
}

const CODES = { red: [31, 39], yellow: [33, 39], green: [32, 39], bold: [1, 22], dim: [2, 22] } as const;
export type Style = keyof typeof CODES;

export class Ui {
	readonly io: Io;
	readonly quiet: boolean;
	readonly json: boolean;
	readonly colorOut: boolean;
	readonly colorErr: boolean;

	constructor(io: Io, opts: { quiet?: boolean; json?: boolean; color?: boolean } = {}) {
		this.io = io;
		this.quiet = !!opts.quiet;
		this.json = !!opts.json;
		this.colorOut = isInteractive(io.stdout, io.env, opts.color !== false);
		this.colorErr = isInteractive(io.stderr, io.env, opts.color !== false);
	}

	/** Whether a progress bar may be drawn on stderr. */
	get animate(): boolean {
		return this.colorErr && !this.quiet;
	}

	paint(text: string, style: Style, stream: 'out' | 'err' = 'out'): string {
		if (!(stream === 'out' ? this.colorOut : this.colorErr)) return text;
		const [a, b] = CODES[style];
		return `\u001b[${a}m${text}\u001b[${b}m`;
	}

	/** A message for people (stderr); silent under --quiet. */
	info(message: string): void {
		if (!this.quiet) this.io.stderr.write(message + '\n');
	}

	warn(message: string): void {
		this.io.stderr.write(`${this.paint('warning:', 'yellow', 'err')} ${message}\n`);
	}

	error(message: string, details: string[] = []): void {
		this.io.stderr.write(`${this.paint('error:', 'red', 'err')} ${message}\n`);
		for (const d of details) this.io.stderr.write(`  ${d}\n`);
	}

	/** Data (stdout), respecting back-pressure so a slow pipe never makes us buffer everything. */
	async out(text: string): Promise<void> {
		if (!this.io.stdout.write(text)) await once(this.io.stdout, 'drain');
	}

	async line(text = ''): Promise<void> {
		await this.out(text + '\n');
	}

	async printJson(value: unknown): Promise<void> {
		await this.out(JSON.stringify(value, null, 2) + '\n');
	}
}

/** Bytes for people: 1536 → "1.5 kB" (SI units, as file managers show them). */
export function formatBytes(n: number): string {
	if (n < 1000) return `${n} B`;
	const units = ['kB', 'MB', 'GB', 'TB'];
	let v = n;
	let i = -1;
	do {
		v /= 1000;
		i++;
	} while (v >= 1000 && i < units.length - 1);
	return `${v >= 100 ? v.toFixed(0) : v.toFixed(1)} ${units[i]}`;
}

/** A plain text table: columns padded to their widest cell. */
export function table(headers: string[], rows: Array<Array<string | number | null>>): string {
	const cells = [headers, ...rows.map((r) => r.map((c) => (c === null ? '' : String(c))))];
	const widths = headers.map((_, i) => Math.max(...cells.map((r) => (r[i] ?? '').length)));
	return (
		cells
			.map((r) =>
				r
					.map((c, i) => (i === r.length - 1 ? c : (c ?? '').padEnd(widths[i])))
					.join('  ')
					.trimEnd()
			)
			.join('\n') + '\n'
	);
}
