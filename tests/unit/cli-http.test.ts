// The CLI's HTTP client against small in-process servers: retries on 5xx/429 honouring Retry-After,
// no retry on 4xx, bounded retries when nothing listens, a timeout on every request, the upload body
// re-sent whole (same Idempotency-Key) after a cut connection, problems turned into one-line errors.
import { createHash } from 'node:crypto';
import { mkdtempSync, writeFileSync, createReadStream } from 'node:fs';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { ApiClient, HttpError, NetworkError, type RetryNotice } from '../../cli/http';
import { EXIT } from '../../cli/exit-codes';

const servers: http.Server[] = [];
afterEach(async () => {
	for (const s of servers.splice(0)) {
		s.closeAllConnections();
		await new Promise((r) => s.close(r));
	}
});

async function serve(handler: http.RequestListener): Promise<string> {
	const s = http.createServer(handler);
	servers.push(s);
	await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
	return `http://127.0.0.1:${(s.address() as AddressInfo).port}`;
}

async function closedPort(): Promise<string> {
	const s = http.createServer();
	await new Promise<void>((r) => s.listen(0, '127.0.0.1', r));
	const url = `http://127.0.0.1:${(s.address() as AddressInfo).port}`;
	await new Promise((r) => s.close(r));
	return url;
}

function client(baseUrl: string, extra: Partial<ConstructorParameters<typeof ApiClient>[0]> = {}) {
	const waits: number[] = [];
	const notices: RetryNotice[] = [];
	const c = new ApiClient({
		baseUrl,
		token: 'rnl_test',
		tokenOrigin: 'RUNNEL_TOKEN',
		timeoutMs: 2000,
		backoff: { retries: 3, baseMs: 100, maxMs: 10_000 },
		sleep: async (ms) => void waits.push(ms),
		onRetry: (n) => notices.push(n),
		...extra
	});
	return { c, waits, notices };
}

/** The error a request fails with (the test fails if it succeeds). */
const failure = (p: Promise<unknown>) =>
	p.then(
		() => {
			throw new Error('expected the request to fail');
		},
		(e: unknown) => e as HttpError & NetworkError
	);

const problem = (res: http.ServerResponse, status: number, body: Record<string, unknown>, headers: Record<string, string> = {}) => {
	res.writeHead(status, { 'content-type': 'application/problem+json', ...headers });
	res.end(JSON.stringify({ status, ...body }));
};

describe('retries', () => {
	it('retries a 503 and a 429, waiting at least what Retry-After asks', async () => {
		let n = 0;
		const url = await serve((req, res) => {
			n++;
			if (n === 1) return problem(res, 503, { title: 'Service unavailable' }, { 'retry-after': '3' });
			if (n === 2) return problem(res, 429, { title: 'Too many requests' }, { 'retry-after': '1' });
			res.writeHead(200, { 'content-type': 'application/json' });
			res.end(JSON.stringify({ ok: true, auth: req.headers.authorization }));
		});
		const { c, waits, notices } = client(url);
		const body = await c.getJson<{ ok: boolean; auth: string }>('/api/v1/me');
		expect(body).toEqual({ ok: true, auth: 'Bearer rnl_test' });
		expect(n).toBe(3);
		expect(waits[0]).toBeGreaterThanOrEqual(3000);
		expect(waits[1]).toBeGreaterThanOrEqual(1000);
		expect(notices.map((x) => x.reason)).toEqual(['HTTP 503 Service unavailable', 'HTTP 429 Too many requests']);
	});

	it('gives up after the configured retries with the last answer', async () => {
		let n = 0;
		const url = await serve((_req, res) => {
			n++;
			problem(res, 502, { title: 'Bad gateway' });
		});
		const { c } = client(url);
		const e = await failure(c.getJson('/x'));
		expect(e).toBeInstanceOf(HttpError);
		expect(n).toBe(4);
		expect(e.message).toMatch(/HTTP 502 .*gave up after 4 attempts/);
		expect(e.exitCode).toBe(EXIT.error);
	});

	it('never retries a 4xx; 401 and 403 exit 4 with a one-line reason', async () => {
		let n = 0;
		const url = await serve((req, res) => {
			n++;
			if (req.url === '/401')
				return problem(res, 401, { title: 'Authentication required', detail: 'The bearer token is unknown, revoked or expired.' });
			if (req.url === '/403') return problem(res, 403, { title: 'Forbidden', detail: 'This needs the `records:write` scope.' });
			problem(res, 422, { title: 'Unprocessable content', detail: 'Key reused.', errors: [{ pointer: '/a', detail: 'bad' }] });
		});
		const { c } = client(url);
		const e401 = await failure(c.getJson('/401'));
		expect([e401.exitCode, e401.status]).toEqual([EXIT.auth, 401]);
		expect(e401.message).toBe('the hub refused the token from RUNNEL_TOKEN (HTTP 401): The bearer token is unknown, revoked or expired.');
		expect(e401.message).not.toContain('\n');
		const e403 = await failure(c.getJson('/403'));
		expect(e403.exitCode).toBe(EXIT.auth);
		expect(e403.message).toContain('records:write');
		const e422 = await failure(c.getJson('/422'));
		expect(e422.exitCode).toBe(EXIT.error);
		expect(e422.details).toEqual(['/a: bad']);
		expect(n).toBe(3);
	});

	it('retries a 409 "key in flight" only when asked to', async () => {
		let n = 0;
		const url = await serve((_req, res) => {
			n++;
			if (n === 1 || n === 3)
				return problem(res, 409, { type: 'urn:runnel:problem:idempotency-key-in-flight', title: 'Conflict' }, { 'retry-after': '1' });
			res.writeHead(202, { 'content-type': 'application/json' });
			res.end('{"id":"1"}');
		});
		const { c } = client(url);
		expect((await c.json({ method: 'POST', path: '/b', retryInFlight: true })).data).toEqual({ id: '1' });
		const e = await failure(c.json({ method: 'POST', path: '/b' }));
		expect(e.status).toBe(409);
		expect(n).toBe(3);
	});

	it('a closed port: bounded retries, then a clear network error (exit 1)', async () => {
		const url = await closedPort();
		const { c, notices } = client(url, { backoff: { retries: 2, baseMs: 1, maxMs: 5 }, sleep: undefined });
		const e = await failure(c.getJson('/api/v1/me'));
		expect(e).toBeInstanceOf(NetworkError);
		expect(e.exitCode).toBe(EXIT.error);
		expect(e.message).toMatch(
			/^cannot reach the hub at http:\/\/127\.0\.0\.1:\d+: connection refused \(ECONNREFUSED\); gave up after 3 attempts$/
		);
		expect(notices).toHaveLength(2);
	});

	it('a server that never answers: the request times out (--timeout)', async () => {
		const url = await serve(() => {
			/* never answers */
		});
		const { c } = client(url, { timeoutMs: 200, backoff: { retries: 0, baseMs: 1, maxMs: 1 } });
		const started = Date.now();
		const e = await failure(c.getJson('/slow'));
		expect(e).toBeInstanceOf(NetworkError);
		expect(e.message).toMatch(/no answer within 0\.2 s/);
		expect(Date.now() - started).toBeLessThan(5000);
	});
});

describe('request bodies', () => {
	it('a connection cut mid-upload is retried with the whole file and the same headers', async () => {
		const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-http-'));
		const file = path.join(dir, 'big.csv');
		const content = Buffer.alloc(3 * 1024 * 1024, 'local_id,practice_code\n');
		writeFileSync(file, content);
		const seen: Array<{ bytes: number; sha: string; key: string | undefined; length: string | undefined }> = [];
		let n = 0;
		const url = await serve((req, res) => {
			n++;
			const h = createHash('sha256');
			let bytes = 0;
			req.on('data', (b: Buffer) => {
				bytes += b.length;
				h.update(b);
				// The first attempt: the connection dies after about 1 MB.
				if (n === 1 && bytes > 1024 * 1024) req.socket.destroy();
			});
			req.on('end', () => {
				seen.push({ bytes, sha: h.digest('hex'), key: req.headers['idempotency-key'] as string, length: req.headers['content-length'] });
				res.writeHead(202, { 'content-type': 'application/json' });
				res.end('{"id":"7"}');
			});
		});
		const { c, notices } = client(url);
		const progress: number[] = [];
		const r = await c.json<{ id: string }>({
			method: 'POST',
			path: '/api/v1/batches',
			headers: { 'idempotency-key': 'k-1', 'content-type': 'text/csv' },
			body: { open: () => createReadStream(file), length: content.length, onProgress: (s) => progress.push(s) }
		});
		expect(r.data.id).toBe('7');
		expect(n).toBe(2);
		expect(notices).toHaveLength(1);
		expect(seen).toEqual([
			{ bytes: content.length, sha: createHash('sha256').update(content).digest('hex'), key: 'k-1', length: String(content.length) }
		]);
		expect(progress.at(-1)).toBe(content.length);
	});

	it('an early answer (e.g. 413) is reported even though the body was not all sent', async () => {
		const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-http-'));
		const file = path.join(dir, 'big.csv');
		writeFileSync(file, Buffer.alloc(8 * 1024 * 1024, 'x'));
		const url = await serve((req, res) => {
			problem(res, 413, { title: 'Content too large', detail: 'The file is larger than the 1 MB limit of this hub.' });
			req.resume();
		});
		const { c } = client(url);
		const e = await failure(c.json({ method: 'POST', path: '/b', body: { open: () => createReadStream(file), length: 8 * 1024 * 1024 } }));
		expect(e).toBeInstanceOf(HttpError);
		expect(e.status).toBe(413);
		expect(e.message).toContain('1 MB limit');
	});
});

describe('links', () => {
	it('follows links on the same hub only, and keeps a path prefix', async () => {
		const { c } = client('https://hub.example.org/runnel');
		expect(c.url('/api/v1/records', { limit: 5, practice: undefined, fy: '' })).toBe(
			'https://hub.example.org/runnel/api/v1/records?limit=5'
		);
		expect(c.url('/runnel/api/v1/records?cursor=abc')).toBe('https://hub.example.org/runnel/api/v1/records?cursor=abc');
		expect(c.url('https://hub.example.org/api/v1/x')).toBe('https://hub.example.org/api/v1/x');
		expect(() => c.url('https://elsewhere.example.net/steal')).toThrow(/another site/);
	});
});
