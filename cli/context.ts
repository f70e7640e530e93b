// What every command gets: the global options, the output streams, the resolved hub URL and token,
// and an HTTP client built from them.
import { APP_VERSION } from '../src/lib/version';
import { DEFAULT_BACKOFF, type BackoffPolicy } from './backoff';
import { configPath, readConfig, resolveSettings, type Resolved, type StoredConfig } from './config';
import { CliError, EXIT, UsageError } from './exit-codes';
import { ApiClient } from './http';
import { Ui, type Io } from './output';

export interface GlobalOptions {
	url?: string;
	tokenFile?: string;
	json?: boolean;
	quiet?: boolean;
	/** False with --no-input: never prompt. */
	input?: boolean;
	/** Seconds. */
	timeout?: number;
	retries?: number;
	color?: boolean;
}

/** Retry timing: `--retries`, and (for tests and impatient scripts) RUNNEL_RETRY_BASE_MS / RUNNEL_RETRY_MAX_MS. */
export function backoffPolicy(env: NodeJS.ProcessEnv, retries: number | undefined): BackoffPolicy {
	const num = (v: string | undefined, fallback: number) => {
		const n = Number(v);
		return v !== undefined && v !== '' && Number.isFinite(n) && n >= 0 ? n : fallback;
	};
	return {
		retries: retries ?? DEFAULT_BACKOFF.retries,
		baseMs: num(env.RUNNEL_RETRY_BASE_MS, DEFAULT_BACKOFF.baseMs),
		maxMs: num(env.RUNNEL_RETRY_MAX_MS, DEFAULT_BACKOFF.maxMs)
	};
}

export class Context {
	readonly io: Io;
	readonly opts: GlobalOptions;
	readonly ui: Ui;
	readonly configFile: string;
	private resolved: Resolved | null = null;
	private stored: StoredConfig | null = null;
	private clients: ApiClient[] = [];

	constructor(io: Io, opts: GlobalOptions) {
		this.io = io;
		this.opts = opts;
		this.ui = new Ui(io, { quiet: opts.quiet, json: opts.json, color: opts.color });
		this.configFile = configPath(io.env);
	}

	get canPrompt(): boolean {
		return this.opts.input !== false && !!this.io.stdin.isTTY && !!this.io.stderr.isTTY;
	}

	storedConfig(): StoredConfig {
		if (!this.stored) {
			const { config, looseMode } = readConfig(this.configFile);
			if (looseMode) this.ui.warn(`${this.configFile} can be read by other users; run \`chmod 600 ${this.configFile}\`.`);
			this.stored = config;
		}
		return this.stored;
	}

	settings(): Resolved {
		this.resolved ??= resolveSettings({
			flags: { url: this.opts.url, tokenFile: this.opts.tokenFile },
			env: this.io.env,
			config: this.storedConfig()
		});
		return this.resolved;
	}

	requireUrl(): string {
		const { url } = this.settings();
		if (!url) throw new UsageError('No hub URL: pass --url URL, set RUNNEL_URL, or run `runnel login --url URL` once.');
		return url;
	}

	/** A client for the hub; `needToken` (default) refuses to go on without credentials (exit 4). */
	client(opts: { needToken?: boolean; url?: string; token?: string | null; tokenOrigin?: string } = {}): ApiClient {
		const url = opts.url ?? this.requireUrl();
		const s = this.settings();
		const token = opts.token !== undefined ? opts.token : s.token;
		if (opts.needToken !== false && !token)
			throw new CliError('No token: set RUNNEL_TOKEN, pass --token-file FILE, or run `runnel login` once.', EXIT.auth);
		const client = new ApiClient({
			baseUrl: url,
			token,
			tokenOrigin: opts.tokenOrigin ?? s.tokenOrigin,
			timeoutMs: Math.round((this.opts.timeout ?? 30) * 1000),
			backoff: backoffPolicy(this.io.env, this.opts.retries),
			userAgent: `runnel-cli/${APP_VERSION} (node ${process.version})`,
			onRetry: (n) =>
				this.ui.info(`${n.reason}; retrying in ${(n.delayMs / 1000).toFixed(1)} s (attempt ${n.attempt + 1} of ${n.attempts})`)
		});
		this.clients.push(client);
		return client;
	}

	close(): void {
		for (const c of this.clients) c.close();
		this.clients = [];
	}
}
