// Where the CLI finds its server URL and token: flags > environment > the user's config file
// (clig.dev precedence). The config file lives in the XDG config folder with mode 0600.
import { chmodSync, existsSync, mkdirSync, readFileSync, renameSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { CliError, EXIT, UsageError } from './exit-codes';

export interface StoredConfig {
	url?: string;
	token?: string;
	saved_at?: string;
}

export type Source = 'flag' | 'env' | 'config' | 'none';

export interface Resolved {
	url: string | null;
	urlSource: Source;
	token: string | null;
	tokenSource: Source;
	/** Human words for where the token came from, e.g. `--token-file /etc/runnel/token`. */
	tokenOrigin: string;
}

/** `$XDG_CONFIG_HOME/runnel/config.json`, else `~/.config/runnel/config.json` (`%APPDATA%` on Windows). */
export function configPath(env: NodeJS.ProcessEnv, platform: NodeJS.Platform = process.platform, home: string = os.homedir()): string {
	const xdg = env.XDG_CONFIG_HOME;
	if (xdg && path.isAbsolute(xdg)) return path.join(xdg, 'runnel', 'config.json');
	if (platform === 'win32' && env.APPDATA) return path.join(env.APPDATA, 'runnel', 'config.json');
	return path.join(home, '.config', 'runnel', 'config.json');
}

/** Reads the config file; a missing file is an empty config, a broken one an error that names it. */
export function readConfig(file: string): { config: StoredConfig; looseMode: boolean } {
	if (!existsSync(file)) return { config: {}, looseMode: false };
	let parsed: unknown;
	try {
		parsed = JSON.parse(readFileSync(file, 'utf8'));
	} catch (e) {
		throw new CliError(`The config file ${file} is not valid JSON (${(e as Error).message}); fix it or run \`runnel login\` again.`);
	}
	if (typeof parsed !== 'object' || parsed === null || Array.isArray(parsed))
		throw new CliError(`The config file ${file} must hold a JSON object.`);
	const o = parsed as Record<string, unknown>;
	const config: StoredConfig = {};
	if (typeof o.url === 'string') config.url = o.url;
	if (typeof o.token === 'string') config.token = o.token;
	if (typeof o.saved_at === 'string') config.saved_at = o.saved_at;
	const looseMode = process.platform !== 'win32' && (statSync(file).mode & 0o077) !== 0;
	return { config, looseMode };
}

/** Writes the config atomically (temp file + rename) with mode 0600 in a 0700 folder. */
export function writeConfig(file: string, config: StoredConfig): void {
	const dir = path.dirname(file);
	mkdirSync(dir, { recursive: true, mode: 0o700 });
	const tmp = `${file}.${process.pid}.tmp`;
	writeFileSync(tmp, JSON.stringify(config, null, 2) + '\n', { mode: 0o600 });
	chmodSync(tmp, 0o600);
	renameSync(tmp, file);
}

/** A server URL as the user typed it → its origin plus any path prefix, without a trailing slash. */
export function normaliseUrl(raw: string): string {
	let u: URL;
	try {
		u = new URL(raw);
	} catch {
		throw new UsageError(`${JSON.stringify(raw)} is not a URL; give the hub's address, e.g. https://runnel.example.org`);
	}
	if (u.protocol !== 'http:' && u.protocol !== 'https:')
		throw new UsageError(`The hub URL must start with http:// or https:// (got ${u.protocol}).`);
	if (u.username || u.password) throw new UsageError('Do not put credentials in the URL; use `runnel login` or RUNNEL_TOKEN.');
	return (u.origin + u.pathname).replace(/\/+$/, '');
}

/** A token as read from a file, stdin or the environment: trimmed; empty or multi-line is refused. */
export function cleanToken(raw: string, where: string): string {
	const t = raw.replace(/^\uFEFF/, '').trim();
	if (t === '') throw new CliError(`No token in ${where}.`, EXIT.auth);
	if (/\s/.test(t)) throw new CliError(`The token in ${where} contains spaces or several lines; it must be one token.`, EXIT.auth);
	return t;
}

export interface ResolveInput {
	flags: { url?: string; tokenFile?: string };
	env: NodeJS.ProcessEnv;
	config: StoredConfig;
	/** Reads a token file (injected for tests). */
	readFile?: (file: string) => string;
}

/** Token: `--token-file` > `RUNNEL_TOKEN` > config. URL: `--url` > `RUNNEL_URL` > config. */
export function resolveSettings({ flags, env, config, readFile = (f) => readFileSync(f, 'utf8') }: ResolveInput): Resolved {
	let url: string | null = null;
	let urlSource: Source = 'none';
	if (flags.url) [url, urlSource] = [normaliseUrl(flags.url), 'flag'];
	else if (env.RUNNEL_URL) [url, urlSource] = [normaliseUrl(env.RUNNEL_URL), 'env'];
	else if (config.url) [url, urlSource] = [normaliseUrl(config.url), 'config'];

	let token: string | null = null;
	let tokenSource: Source = 'none';
	let tokenOrigin = 'nowhere';
	if (flags.tokenFile) {
		let text: string;
		try {
			text = readFile(flags.tokenFile);
		} catch (e) {
			throw new CliError(
				`Cannot read the token file ${flags.tokenFile}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}.`,
				EXIT.auth
			);
		}
		[token, tokenSource, tokenOrigin] = [cleanToken(text, `the token file ${flags.tokenFile}`), 'flag', `--token-file ${flags.tokenFile}`];
	} else if (env.RUNNEL_TOKEN) {
		[token, tokenSource, tokenOrigin] = [cleanToken(env.RUNNEL_TOKEN, 'RUNNEL_TOKEN'), 'env', 'RUNNEL_TOKEN'];
	} else if (config.token) {
		[token, tokenSource, tokenOrigin] = [cleanToken(config.token, 'the config file'), 'config', 'the config file'];
	}
	return { url, urlSource, token, tokenSource, tokenOrigin };
}
