// Where an export goes: stdout (`-` or no -o), or a file written under a temporary name and renamed
// into place only when complete, so a cut connection never leaves a half file that looks whole.
import { once } from 'node:events';
import { createWriteStream, renameSync, rmSync } from 'node:fs';
import path from 'node:path';
import { PassThrough, type Readable, type Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { CliError, UsageError } from './exit-codes';
import type { Io } from './output';

export interface Sink {
	stream: Writable;
	/** `stdout` or the file name. */
	label: string;
	toStdout: boolean;
	/** Copies a readable into the sink (never ends stdout). */
	pour(source: Readable): Promise<void>;
	/** Finishes: closes and renames the file into place. */
	commit(): Promise<void>;
	/** Gives up: removes the partial file. */
	abort(): void;
}

export function openSink(io: Io, target: string | undefined, opts: { binary: boolean }): Sink {
	if (target === undefined || target === '-') {
		if (opts.binary && io.stdout.isTTY)
			throw new UsageError('Refusing to write a binary file (XLSX) to the terminal; pass -o FILE or redirect stdout.');
		// A pass-through in front of stdout so the writer can `end()` it without closing stdout itself.
		const front = new PassThrough();
		const flowing = pipeline(front, io.stdout, { end: false });
		return {
			stream: front,
			label: 'stdout',
			toStdout: true,
			pour: async (source) => {
				await pipeline(source, front);
				await flowing;
			},
			commit: async () => {
				if (!front.writableEnded) front.end();
				await flowing;
			},
			abort: () => front.destroy()
		};
	}
	const final = path.resolve(target);
	const tmp = path.join(path.dirname(final), `.${path.basename(final)}.part-${process.pid}`);
	let out: ReturnType<typeof createWriteStream>;
	try {
		out = createWriteStream(tmp, { flags: 'wx' });
	} catch (e) {
		throw new CliError(`cannot write ${target}: ${(e as Error).message}`);
	}
	let failed: Error | null = null;
	out.on('error', (e) => (failed = e));
	return {
		stream: out,
		label: target,
		toStdout: false,
		pour: (source) => pipeline(source, out),
		commit: async () => {
			if (failed) throw new CliError(`cannot write ${target}: ${(failed as Error).message}`);
			if (!out.writableFinished) {
				if (!out.writableEnded) out.end();
				await once(out, 'finish');
			}
			if (!out.closed) await once(out, 'close');
			renameSync(tmp, final);
		},
		abort: () => {
			out.destroy();
			rmSync(tmp, { force: true });
		}
	};
}
