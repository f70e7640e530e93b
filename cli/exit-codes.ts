// The exit codes of `runnel`, one place (documented in `runnel --help` and the README).
export const EXIT = {
	/** Everything worked. */
	ok: 0,
	/** Anything else went wrong: network, server error, a file that cannot be read, a failed verification. */
	error: 1,
	/** Rows were rejected, or a check found findings of severity `error`. */
	rejected: 2,
	/** The command line was wrong (unknown option, missing argument, bad value). */
	usage: 3,
	/** The credentials were refused (401) or lack the permission (403), or none were given. */
	auth: 4
} as const;

export type ExitCode = (typeof EXIT)[keyof typeof EXIT];

export const EXIT_CODES_HELP = `Exit codes:
  0  success
  1  error (network, server, unreadable file, failed verification)
  2  rows rejected, or findings of severity error
  3  usage (unknown option, missing or bad argument)
  4  authentication or permission refused (HTTP 401/403, or no token)`;

/** When several files give different outcomes, the most urgent code wins: 4, then 3, then 1, then 2. */
export function worstExit(codes: Iterable<number>): number {
	const rank = (c: number) =>
		c === EXIT.auth ? 5 : c === EXIT.usage ? 4 : c === EXIT.error ? 3 : c === EXIT.rejected ? 2 : c === 0 ? 0 : 3;
	let worst = 0;
	for (const c of codes) if (rank(c) > rank(worst)) worst = c;
	return worst;
}

/** An error the CLI reports as one line on stderr and turns into its exit code. */
export class CliError extends Error {
	readonly exitCode: number;
	/** Extra lines printed under the message (e.g. field errors from a problem document). */
	readonly details: string[];
	constructor(message: string, exitCode: number = EXIT.error, details: string[] = []) {
		super(message);
		this.exitCode = exitCode;
		this.details = details;
	}
}

export class UsageError extends CliError {
	constructor(message: string) {
		super(message, EXIT.usage);
	}
}
