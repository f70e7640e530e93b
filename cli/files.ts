// Local files the CLI sends or checks: format from the name, streaming SHA-256, and `-` (stdin) spooled
// to a temporary file so it can be hashed first and re-sent on a retry without holding it in memory.
import { createHash, randomUUID } from 'node:crypto';
import { createReadStream, createWriteStream, rmSync, statSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import type { Readable } from 'node:stream';
import { CliError, UsageError } from './exit-codes';

export const FILE_FORMATS = ['csv', 'xlsx', 'ndjson', 'json'] as const;
export type FileFormat = (typeof FILE_FORMATS)[number];

export const CONTENT_TYPES: Record<FileFormat, string> = {
	csv: 'text/csv',
	xlsx: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
	ndjson: 'application/x-ndjson',
	json: 'application/json'
};

/** The upload format from the file name: .csv/.txt, .xlsx, .ndjson/.jsonl, .json. */
export function formatFromName(name: string): FileFormat | null {
	const ext = /\.([A-Za-z0-9]+)$/.exec(name)?.[1]?.toLowerCase();
	switch (ext) {
		case 'csv':
		case 'txt':
			return 'csv';
		case 'xlsx':
			return 'xlsx';
		case 'ndjson':
		case 'jsonl':
			return 'ndjson';
		case 'json':
			return 'json';
		default:
			return null;
	}
}

export function resolveFormat(file: string, explicit: string | undefined): FileFormat {
	if (explicit) return explicit as FileFormat;
	const f = formatFromName(file);
	if (f) return f;
	if (file === '-') throw new UsageError('Reading from stdin (-) needs --format csv|xlsx|ndjson|json.');
	throw new UsageError(`Cannot tell the format of ${file} from its name; name it .csv, .xlsx, .ndjson or .json, or pass --format.`);
}

/** SHA-256 (hex) and size of a file, read as a stream. */
export async function hashFile(file: string): Promise<{ sha256: string; bytes: number }> {
	const hash = createHash('sha256');
	let bytes = 0;
	for await (const chunk of createReadStream(file)) {
		bytes += (chunk as Buffer).length;
		hash.update(chunk as Buffer);
	}
	return { sha256: hash.digest('hex'), bytes };
}

/** Checks that a path names a readable regular file and returns its size. */
export function fileSize(file: string): number {
	let st;
	try {
		st = statSync(file);
	} catch (e) {
		const code = (e as NodeJS.ErrnoException).code;
		throw new CliError(code === 'ENOENT' ? `${file}: no such file` : `${file}: cannot read it (${code ?? (e as Error).message})`);
	}
	if (!st.isFile()) throw new CliError(`${file}: not a regular file`);
	return st.size;
}

/** Copies stdin to a temporary file (streamed); the caller removes it with `discard`. */
export async function spoolStdin(stdin: Readable): Promise<{ file: string; discard: () => void }> {
	const file = path.join(os.tmpdir(), `runnel-stdin-${randomUUID()}`);
	await pipeline(stdin, createWriteStream(file, { mode: 0o600 }));
	return { file, discard: () => rmSync(file, { force: true }) };
}

/** The name the server records for an upload (the base name; `stdin` for `-`). */
export function displayName(file: string): string {
	return file === '-' ? 'stdin' : path.basename(file);
}
