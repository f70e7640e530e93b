// Reading a secret: from a pipe (all of stdin) or typed at a terminal without echo.
import { CliError, EXIT } from './exit-codes';
import type { Io } from './output';

const MAX_SECRET = 8192;

/** Reads all of stdin (a token piped in), at most 8 KiB. */
export async function readStdinSecret(io: Io): Promise<string> {
	let text = '';
	for await (const chunk of io.stdin) {
		text += typeof chunk === 'string' ? chunk : (chunk as Buffer).toString('utf8');
		if (text.length > MAX_SECRET) throw new CliError('stdin holds more than a token; pipe in just the token.', EXIT.auth);
	}
	return text;
}

/** Asks on stderr and reads one line from the terminal with echo off. */
export function promptHidden(io: Io, question: string): Promise<string> {
	const stdin = io.stdin;
	return new Promise((resolve, reject) => {
		let value = '';
		// Echo goes off before the question appears, so nothing typed after it is ever shown.
		const wasRaw = (stdin as { isRaw?: boolean }).isRaw ?? false;
		stdin.setRawMode?.(true);
		stdin.resume();
		io.stderr.write(question);
		const done = (err: Error | null) => {
			stdin.off('data', onData);
			stdin.setRawMode?.(wasRaw);
			stdin.pause();
			io.stderr.write('\n');
			if (err) reject(err);
			else resolve(value);
		};
		const onData = (chunk: Buffer | string) => {
			for (const ch of typeof chunk === 'string' ? chunk : chunk.toString('utf8')) {
				if (ch === '\r' || ch === '\n' || ch === '\u0004') return done(null);
				if (ch === '\u0003') return done(new CliError('Cancelled.', EXIT.error));
				if (ch === '\u007f' || ch === '\b') value = value.slice(0, -1);
				else if (ch >= ' ') value += ch;
				if (value.length > MAX_SECRET) return done(new CliError('That is longer than any token.', EXIT.auth));
			}
		};
		stdin.on('data', onData);
	});
}
