// The `runnel` command line: global options, the commands, help with examples, and the mapping of
// every outcome to a documented exit code.
import { Command, CommanderError, InvalidArgumentError, Option } from 'commander';
import { APP_VERSION } from '../src/lib/version';
import { registerBatches } from './commands/batches';
import { registerCheck } from './commands/check';
import { registerExport } from './commands/export';
import { registerLogin } from './commands/login';
import { registerRecords } from './commands/records';
import { registerRelease } from './commands/release';
import { registerSchema } from './commands/schema';
import { registerUpload } from './commands/upload';
import { registerWhoami } from './commands/whoami';
import { Context, type GlobalOptions } from './context';
import { CliError, EXIT, EXIT_CODES_HELP } from './exit-codes';
import { processIo, Ui, type Io } from './output';

/** The handler of one command: returns its exit code. */
export type Handler<A extends unknown[] = unknown[]> = (ctx: Context, ...args: A) => Promise<number>;

export interface Registry {
	/** Wraps a command handler: builds the context from the merged global options, records the exit code. */
	action<A extends unknown[]>(handler: Handler<A>): (...args: unknown[]) => Promise<void>;
}

export function positiveNumber(name: string) {
	return (v: string) => {
		const n = Number(v);
		if (!Number.isFinite(n) || n <= 0) throw new InvalidArgumentError(`${name} must be a positive number.`);
		return n;
	};
}

export function wholeNumber(name: string, min = 0, max = Number.MAX_SAFE_INTEGER) {
	return (v: string) => {
		const n = Number(v);
		if (!/^\d+$/.test(v) || n < min || n > max) throw new InvalidArgumentError(`${name} must be a whole number from ${min} to ${max}.`);
		return n;
	};
}

const ROOT_HELP = `
Environment:
  RUNNEL_URL    the hub URL (after --url, before the config file)
  RUNNEL_TOKEN  the API token (after --token-file, before the config file)
  NO_COLOR      no colour and no progress bar
  XDG_CONFIG_HOME  where the config file lives (default ~/.config/runnel/config.json)

${EXIT_CODES_HELP}

Examples:
  $ printf '%s' "$TOKEN" | runnel login --url https://runnel.example.org
  $ runnel check practices.csv
  $ runnel upload --mode valid --wait practices.csv
  $ runnel export rollups --fy 2024..2027 --format xlsx -o rollups.xlsx
`;

export function buildProgram(io: Io, state: { code: number; ctx: Context | null }): Command {
	const program = new Command();
	program
		.name('runnel')
		.description('Send practice records to a Runnel hub, check them offline, and export what the hub knows.')
		.version(APP_VERSION, '-V, --version', 'print the version and exit')
		.helpOption('-h, --help', 'show help for a command')
		.option('--url <url>', 'the hub URL (overrides RUNNEL_URL and the config file)')
		.option('--token-file <path>', 'read the API token from this file (overrides RUNNEL_TOKEN and the config file)')
		.option('--json', 'write machine-readable JSON on stdout')
		.option('-q, --quiet', 'print nothing on stderr unless something is wrong')
		.option('--no-input', 'never prompt; fail instead when something is missing')
		.option('--no-color', 'no colour and no progress bar')
		.addOption(
			new Option('--timeout <seconds>', 'network timeout for each request (connect and idle)')
				.argParser(positiveNumber('--timeout'))
				.default(30)
		)
		.addOption(new Option('--retries <n>', 'retries on network errors, 5xx and 429').argParser(wholeNumber('--retries', 0, 20)).default(5))
		.addHelpText('after', ROOT_HELP)
		.showHelpAfterError('(run `runnel --help` or `runnel COMMAND --help` for usage)')
		.exitOverride()
		.configureOutput({
			writeOut: (s) => io.stdout.write(s),
			writeErr: (s) => io.stderr.write(s)
		});

	const registry: Registry = {
		action<A extends unknown[]>(handler: Handler<A>) {
			return async (...args: unknown[]) => {
				const cmd = args[args.length - 1] as Command;
				const globals = cmd.optsWithGlobals<GlobalOptions>();
				const ctx = new Context(io, globals);
				state.ctx = ctx;
				state.code = await handler(ctx, ...(args.slice(0, -1) as A));
			};
		}
	};

	for (const register of [
		registerLogin,
		registerWhoami,
		registerCheck,
		registerUpload,
		registerBatches,
		registerRecords,
		registerExport,
		registerSchema,
		registerRelease
	]) {
		const cmd = register(program, registry);
		cmd.exitOverride();
		cmd.configureOutput({ writeOut: (s) => io.stdout.write(s), writeErr: (s) => io.stderr.write(s) });
		cmd.showHelpAfterError(`(run \`runnel ${cmd.name()} --help\` for usage)`);
		for (const sub of cmd.commands) {
			sub.exitOverride();
			sub.configureOutput({ writeOut: (s) => io.stdout.write(s), writeErr: (s) => io.stderr.write(s) });
			sub.showHelpAfterError(`(run \`runnel ${cmd.name()} ${sub.name()} --help\` for usage)`);
		}
	}
	return program;
}

/** Runs the CLI with `args` (without `node` and the script); resolves to the exit code. */
export async function run(args: string[], io: Io = processIo()): Promise<number> {
	const state: { code: number; ctx: Context | null } = { code: EXIT.ok, ctx: null };
	const program = buildProgram(io, state);
	try {
		await program.parseAsync(args, { from: 'user' });
		return state.code;
	} catch (e) {
		if (e instanceof CommanderError) return e.exitCode === 0 ? EXIT.ok : EXIT.usage;
		const ui = state.ctx?.ui ?? new Ui(io);
		if (e instanceof CliError) {
			ui.error(e.message, e.details);
			return e.exitCode;
		}
		ui.error(`unexpected failure: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
		return EXIT.error;
	} finally {
		state.ctx?.close();
	}
}
