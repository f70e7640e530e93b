// The CLI's HTTP client (node:http/https): bearer token, a timeout on every request (connect and idle),
// retries with backoff on network errors, 5xx and 429 (honouring Retry-After), request bodies streamed
// from a file for every attempt, response bodies handed back as streams, RFC 9457 problems turned into
// one-line errors with the right exit code.
import http, { type IncomingHttpHeaders, type IncomingMessage } from 'node:http';
import https from 'node:https';
import { Transform, type Readable } from 'node:stream';
import { setTimeout as delay } from 'node:timers/promises';
import { backoffDelay, DEFAULT_BACKOFF, parseRetryAfter, type BackoffPolicy } from './backoff';
import { CliError, EXIT } from './exit-codes';

export type Query = Record<string, string | number | boolean | null | undefined>;

export interface RequestBody {
	/** Opens the body afresh (called once per attempt, so a retry re-reads the file from the start). */
	open: () => Readable;
	length: number | null;
	/** Called with the bytes sent so far in the current attempt. */
	onProgress?: (sent: number) => void;
}

export interface RequestSpec {
	method?: 'GET' | 'POST' | 'PUT' | 'DELETE';
	/** `/api/v1/…` (joined to the hub URL) or a link the server gave. */
	path: string;
	query?: Query;
	headers?: Record<string, string>;
	body?: RequestBody;
	/** Retry on network errors, 5xx and 429 (default true). */
	retry?: boolean;
	/** Also retry a 409 whose problem type says the same Idempotency-Key is still in flight. */
	retryInFlight?: boolean;
	/** Send the bearer token (default true). */
	auth?: boolean;
}

export interface Response {
	status: number;
	headers: IncomingHttpHeaders;
	body: IncomingMessage;
	url: string;
}

export interface RetryNotice {
	/** 1-based number of the attempt that failed. */
	attempt: number;
	attempts: number;
	delayMs: number;
	reason: string;
}

export interface ClientOptions {
	baseUrl: string;
	token: string | null;
	/** Where the token came from, for error messages ("the token from RUNNEL_TOKEN was refused"). */
	tokenOrigin?: string;
	timeoutMs: number;
	backoff?: BackoffPolicy;
	userAgent?: string;
	onRetry?: (n: RetryNotice) => void;
	sleep?: (ms: number) => Promise<unknown>;
	random?: () => number;
}

export interface Problem {
	type?: string;
	title?: string;
	status?: number;
	detail?: string;
	instance?: string;
	errors?: Array<{ detail?: string; pointer?: string }>;
	[k: string]: unknown;
}

/** A network failure (no HTTP answer): refused, reset, timed out, DNS… */
export class NetworkError extends CliError {
	readonly code: string;
	readonly retryable: boolean;
	constructor(message: string, code: string, retryable: boolean) {
		super(message, EXIT.error);
		this.code = code;
		this.retryable = retryable;
	}
}

/** The server answered with an error status. 401/403 exit with 4, everything else with 1. */
export class HttpError extends CliError {
	readonly status: number;
	readonly problem: Problem | null;
	readonly headers: IncomingHttpHeaders;
	constructor(message: string, status: number, problem: Problem | null, headers: IncomingHttpHeaders) {
		const details = (problem?.errors ?? []).map((e) => `${e.pointer ? `${e.pointer}: ` : ''}${e.detail ?? ''}`.trim()).filter(Boolean);
		super(message, status === 401 || status === 403 ? EXIT.auth : EXIT.error, details);
		this.status = status;
		this.problem = problem;
		this.headers = headers;
	}

	get problemType(): string | null {
		return this.problem?.type?.replace(/^urn:runnel:problem:/, '') ?? null;
	}
}

const RETRY_STATUSES = new Set([408, 429, 500, 502, 503, 504]);

const NETWORK_WORDS: Record<string, string> = {
	ECONNREFUSED: 'connection refused',
	ECONNRESET: 'connection reset',
	EPIPE: 'connection closed while sending',
	ETIMEDOUT: 'timed out',
	ENOTFOUND: 'host not found',
	EAI_AGAIN: 'name lookup failed',
	EHOSTUNREACH: 'host unreachable',
	ENETUNREACH: 'network unreachable',
	ECONNABORTED: 'connection aborted',
	UND_ERR_SOCKET: 'connection closed',
	ERR_STREAM_PREMATURE_CLOSE: 'connection closed early'
};

/** Turns a socket-level error into a NetworkError (TLS certificate problems are not retried). */
export function networkError(e: unknown, url: string): NetworkError {
	const err = e as NodeJS.ErrnoException;
	const code = err.code ?? (err.message === 'socket hang up' ? 'ECONNRESET' : 'ENETWORK');
	const tls = /CERT|SSL|TLS|SELF_SIGNED|UNABLE_TO_VERIFY/i.test(code);
	const words = NETWORK_WORDS[code] ?? (tls ? `TLS problem: ${err.message}` : err.message || code);
	const host = safeOrigin(url);
	return new NetworkError(`cannot reach the hub at ${host}: ${words}${NETWORK_WORDS[code] ? ` (${code})` : ''}`, code, !tls);
}

function safeOrigin(url: string): string {
	try {
		return new URL(url).origin;
	} catch {
		return url;
	}
}

class TimeoutError extends Error {
	code = 'ETIMEDOUT';
}

/** Reads a whole (small) response body as text, refusing more than `limit` bytes. */
export async function readText(res: IncomingMessage, limit = 20 * 1024 * 1024): Promise<string> {
	const chunks: Buffer[] = [];
	let size = 0;
	for await (const chunk of res) {
		size += (chunk as Buffer).length;
		if (size > limit) {
			res.destroy();
			throw new CliError(`The hub's answer is larger than ${limit} bytes; this command expected a short JSON document.`);
		}
		chunks.push(chunk as Buffer);
	}
	return Buffer.concat(chunks).toString('utf8');
}

export class ApiClient {
	readonly baseUrl: string;
	private readonly opts: ClientOptions;
	private readonly agents: { http: http.Agent; https: https.Agent };

	constructor(opts: ClientOptions) {
		this.opts = opts;
		this.baseUrl = opts.baseUrl.replace(/\/+$/, '');
		this.agents = { http: new http.Agent({ keepAlive: true }), https: new https.Agent({ keepAlive: true }) };
	}

	get token(): string | null {
		return this.opts.token;
	}

	/** Frees kept-alive sockets so the process can end. */
	close(): void {
		this.agents.http.destroy();
		this.agents.https.destroy();
	}

	/** The absolute URL of an API path or a server-given link (only links to the same hub are followed). */
	url(pathOrLink: string, query?: Query): string {
		let u: URL;
		if (/^https?:\/\//i.test(pathOrLink)) {
			u = new URL(pathOrLink);
			if (u.origin !== new URL(this.baseUrl).origin)
				throw new CliError(`The hub pointed at another site (${u.origin}); not following it with your token.`);
		} else {
			const prefix = new URL(this.baseUrl).pathname.replace(/\/+$/, '');
			const p = pathOrLink.startsWith('/') ? pathOrLink : `/${pathOrLink}`;
			u = new URL((prefix && !p.startsWith(prefix + '/') ? prefix : '') + p, this.baseUrl);
		}
		for (const [k, v] of Object.entries(query ?? {})) {
			if (v === undefined || v === null || v === '' || v === false) continue;
			u.searchParams.set(k, String(v));
		}
		return u.toString();
	}

	/** One attempt. Resolves with the response (any status); rejects with a NetworkError. */
	send(spec: RequestSpec): Promise<Response> {
		const url = this.url(spec.path, spec.query);
		const u = new URL(url);
		const mod = u.protocol === 'https:' ? https : http;
		const headers: Record<string, string> = {
			'user-agent': this.opts.userAgent ?? 'runnel-cli',
			accept: 'application/json, application/problem+json;q=0.9, */*;q=0.1',
			...spec.headers
		};
		if (spec.auth !== false && this.opts.token) headers.authorization = `Bearer ${this.opts.token}`;
		if (spec.body?.length !== null && spec.body?.length !== undefined) headers['content-length'] = String(spec.body.length);
		const timeoutMs = this.opts.timeoutMs;

		return new Promise<Response>((resolve, reject) => {
			let settled = false;
			let source: Readable | null = null;
			const stopBody = () => {
				if (source) {
					source.unpipe();
					source.destroy();
				}
			};
			const req = mod.request(url, {
				method: spec.method ?? 'GET',
				headers,
				agent: u.protocol === 'https:' ? this.agents.https : this.agents.http,
				timeout: timeoutMs
			});
			req.on('timeout', () => req.destroy(new TimeoutError(`no answer within ${Math.round(timeoutMs / 100) / 10} s`)));
			req.on('response', (res) => {
				if (settled) return;
				settled = true;
				stopBody();
				resolve({ status: res.statusCode ?? 0, headers: res.headers, body: res, url });
			});
			req.on('error', (e) => {
				if (settled) return;
				settled = true;
				stopBody();
				if (e instanceof TimeoutError)
					reject(new NetworkError(`cannot reach the hub at ${u.origin}: ${e.message} (--timeout)`, 'ETIMEDOUT', true));
				else if (e instanceof CliError) reject(e);
				else reject(networkError(e, url));
			});
			if (!spec.body) {
				req.end();
				return;
			}
			let sent = 0;
			const onProgress = spec.body.onProgress;
			source = spec.body.open();
			source.on('error', (e) => {
				const err = e as NodeJS.ErrnoException;
				req.destroy(new CliError(`cannot read the file being sent: ${err.code ?? err.message}`));
			});
			const counter = new Transform({
				transform(chunk: Buffer, _enc, cb) {
					sent += chunk.length;
					onProgress?.(sent);
					cb(null, chunk);
				}
			});
			source.pipe(counter).pipe(req);
		});
	}

	/** Sends with retries; answers below 400 resolve, anything else becomes an HttpError (or NetworkError). */
	async request(spec: RequestSpec): Promise<Response> {
		const policy =
			spec.retry === false ? { ...(this.opts.backoff ?? DEFAULT_BACKOFF), retries: 0 } : (this.opts.backoff ?? DEFAULT_BACKOFF);
		const attempts = policy.retries + 1;
		const sleep = this.opts.sleep ?? ((ms: number) => delay(ms));
		for (let attempt = 0; ; attempt++) {
			let res: Response;
			try {
				res = await this.send(spec);
			} catch (e) {
				if (e instanceof NetworkError && e.retryable && attempt + 1 < attempts) {
					const ms = backoffDelay(policy, attempt, null, this.opts.random);
					this.opts.onRetry?.({
						attempt: attempt + 1,
						attempts,
						delayMs: ms,
						reason: e.message.replace(/^cannot reach the hub at \S+: /, '')
					});
					await sleep(ms);
					continue;
				}
				if (e instanceof NetworkError && attempt > 0) {
					throw new NetworkError(`${e.message}; gave up after ${attempt + 1} attempts`, e.code, false);
				}
				throw e;
			}
			if (res.status < 300) return res;
			if (res.status >= 300 && res.status < 400) {
				res.body.resume();
				const to = res.headers.location ?? '(nowhere)';
				throw new CliError(
					`The hub answered with a redirect (HTTP ${res.status}) to ${to}; check the hub URL (--url, RUNNEL_URL or \`runnel login\`).`
				);
			}
			const error = await this.toHttpError(res);
			const inFlight = spec.retryInFlight && res.status === 409 && error.problemType === 'idempotency-key-in-flight';
			if ((RETRY_STATUSES.has(res.status) || inFlight) && attempt + 1 < attempts) {
				const ms = backoffDelay(policy, attempt, parseRetryAfter(res.headers['retry-after'] as string | undefined), this.opts.random);
				this.opts.onRetry?.({
					attempt: attempt + 1,
					attempts,
					delayMs: ms,
					reason: `HTTP ${res.status} ${error.problem?.title ?? ''}`.trim()
				});
				await sleep(ms);
				continue;
			}
			if (attempt > 0 && (RETRY_STATUSES.has(res.status) || inFlight)) {
				throw new HttpError(`${error.message} (gave up after ${attempt + 1} attempts)`, error.status, error.problem, error.headers);
			}
			throw error;
		}
	}

	/** GET/POST with a JSON answer. */
	async json<T>(spec: RequestSpec): Promise<{ data: T; response: Response }> {
		const response = await this.request(spec);
		const text = await readText(response.body);
		try {
			return { data: JSON.parse(text) as T, response };
		} catch {
			throw new CliError(
				`The hub's answer to ${spec.path} is not JSON (HTTP ${response.status}, ${response.headers['content-type'] ?? 'no content type'}); is the URL a Runnel hub?`
			);
		}
	}

	async getJson<T>(path: string, query?: Query): Promise<T> {
		return (await this.json<T>({ path, query })).data;
	}

	/** Every item of a cursor-paged list (`{ data, next }`), page by page, at most `limit` items. */
	async *pages<T>(path: string, query: Query, limit = Infinity): AsyncGenerator<T> {
		let next: string | null = this.url(path, query);
		let n = 0;
		while (next && n < limit) {
			const page: { data: T[]; next: string | null } = await this.getJson(next);
			for (const item of page.data) {
				if (n >= limit) return;
				n++;
				yield item;
			}
			next = page.next;
		}
	}

	private async toHttpError(res: Response): Promise<HttpError> {
		let problem: Problem | null = null;
		let text = '';
		try {
			text = await readText(res.body, 1024 * 1024);
			const type = String(res.headers['content-type'] ?? '');
			if (/json/.test(type)) problem = JSON.parse(text) as Problem;
		} catch {
			problem = null;
		}
		const title = problem?.title ?? http.STATUS_CODES[res.status] ?? 'Error';
		const detail = problem?.detail ?? (problem ? '' : text.trim().split('\n')[0]?.slice(0, 200));
		let message = `HTTP ${res.status} ${title}${detail ? `: ${detail}` : ''}`;
		if (res.status === 401)
			message = `the hub refused the token from ${this.opts.tokenOrigin ?? 'your settings'} (HTTP 401): ${detail || title}`;
		else if (res.status === 403) message = `permission refused (HTTP 403): ${detail || title}`;
		return new HttpError(message, res.status, problem, res.headers);
	}
}
