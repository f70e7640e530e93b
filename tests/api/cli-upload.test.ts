// `runnel upload` against the built app: streamed uploads, the derived Idempotency-Key (a re-run never
// makes a second batch, even when the connection was cut mid-upload or the answer was lost), --wait
// with findings and exit code 2, --json, and the errors a nightly script must tell apart.
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import net from 'node:net';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, ROOT, startApp } from '../helpers/app';
import { BASIC_HEADER, BLH_COUNTY, closeTestDb, count, csv, db, uniquePrefix } from '../helpers/batches';
import { runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };
const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-cli-upload-'));

beforeAll(async () => {
	app = await startApp();
});
afterAll(async () => {
	await app?.close();
	await closeTestDb();
});

const asDistrict = (extra: Record<string, string> = {}) => ({
	env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district, ...extra }
});

/** A clean CSV of `n` new records (unique local ids, so its SHA-256 is unique to this test). */
function cleanFile(name: string, n: number): { file: string; sha256: string; prefix: string } {
	const prefix = uniquePrefix('CLI');
	const rows = Array.from({ length: n }, (_, i) => [
		`${prefix}-${i + 1}`,
		'340',
		BLH_COUNTY,
		'2024-10-01',
		'',
		'',
		String(10 + (i % 90)),
		''
	]);
	const text = csv(BASIC_HEADER, rows);
	const file = path.join(dir, name);
	writeFileSync(file, text);
	return { file, sha256: createHash('sha256').update(text).digest('hex'), prefix };
}

const batchesWithSha = (sha: string) => count('select count(*) as n from batches where sha256 = $1', [sha]);
const batchIdOf = (stdout: string) => /batch (\d+)/.exec(stdout)?.[1];

describe('runnel upload --wait', () => {
	it('a clean file: exit 0, one summary line on stdout, one progress line per file on stderr', async () => {
		const f = cleanFile('clean-a.csv', 5);
		const r = await runCli(['upload', '--wait', f.file], asDistrict());
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout.trim().split('\n')).toHaveLength(1);
		expect(r.stdout).toMatch(
			/^clean-a\.csv: batch \d+ done \(mode all, district BLH\): 5 rows; 5 accepted; 0 rejected; 0 errors, 0 warnings; 5 created, 0 updated, 0 unchanged, 0 withdrawn/
		);
		expect(r.stderr).toMatch(/^clean-a\.csv: sent \d+ B as batch \d+ \(mode all\)$/m);
		expect(r.stderr).not.toContain('\r'); // not a terminal: no bar
		expect(await count('select count(*) as n from records where local_id like $1', [`${f.prefix}-%`])).toBe(5);
	});

	it('the same upload twice makes one batch: the second run is answered with the first batch', async () => {
		const f = cleanFile('twice.csv', 4);
		const first = await runCli(['upload', '--wait', f.file], asDistrict());
		expect(first.code, first.stderr).toBe(0);
		const second = await runCli(['upload', '--wait', f.file], asDistrict());
		expect(second.code, second.stderr).toBe(0);
		expect(second.stderr).toMatch(/twice\.csv: already sent with the same Idempotency-Key as batch \d+; nothing sent twice/);
		expect(batchIdOf(second.stdout)).toBe(batchIdOf(first.stdout));
		expect(await batchesWithSha(f.sha256)).toBe(1);
	});

	it('the same file sent again as a new upload (another night, a new key) reports every row unchanged', async () => {
		const f = cleanFile('again.csv', 6);
		const first = await runCli(['upload', '--wait', f.file], asDistrict());
		expect(first.code, first.stderr).toBe(0);
		const again = await runCli(['upload', '--wait', '--idempotency-key', `night-2-${f.prefix}`, f.file], asDistrict());
		expect(again.code, again.stderr).toBe(0);
		expect(again.stdout).toContain('6 rows; 6 accepted; 0 rejected; 0 errors, 0 warnings; 0 created, 0 updated, 6 unchanged, 0 withdrawn');
		expect(await batchesWithSha(f.sha256)).toBe(2);
	});

	it('rows with mistakes: exit 2 and each finding as file:row:column on stdout', async () => {
		const p = uniquePrefix('MIS');
		const text = csv(BASIC_HEADER, [
			[`${p}-1`, '340', BLH_COUNTY, '2024-10-01', '', '', '50', ''],
			[`${p}-2`, '340', BLH_COUNTY, '2024-13-01', '', '', '50', ''],
			[`${p}-3`, '999', BLH_COUNTY, '2024-10-01', '', '', '50', '']
		]);
		const file = path.join(dir, 'mistakes-small.csv');
		writeFileSync(file, text);
		const r = await runCli(['upload', '--wait', '--mode', 'valid', file], asDistrict());
		expect(r.code, r.stderr).toBe(2);
		expect(r.stdout).toMatch(/1 rejected|2 rejected/);
		// installed_on is column 4, practice_code column 2 (header counted as row 1).
		expect(r.stdout).toMatch(/^mistakes-small\.csv:3:4: error [a-z-]+: /m);
		expect(r.stdout).toMatch(/^mistakes-small\.csv:4:2: error [a-z-]+: /m);
	});

	it('--json gives one machine-readable entry per file', async () => {
		const f = cleanFile('json.csv', 2);
		const r = await runCli(['upload', '--wait', '--json', f.file], asDistrict());
		expect(r.code, r.stderr).toBe(0);
		const out = JSON.parse(r.stdout);
		expect(out).toHaveLength(1);
		expect(out[0]).toMatchObject({
			file: 'json.csv',
			replayed: false,
			exit_code: 0,
			batch: { status: 'done', counts: { created: 2 } },
			findings: []
		});
		expect(out[0].idempotency_key).toMatch(new RegExp(`^runnel-cli\\.v1\\.id\\d+\\.all\\.${f.sha256}$`));
	});

	it('--dry-run checks and saves nothing', async () => {
		const f = cleanFile('dry.csv', 3);
		const r = await runCli(['upload', '--wait', '--dry-run', f.file], asDistrict());
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout).toContain('(mode check');
		expect(await count('select count(*) as n from records where local_id like $1', [`${f.prefix}-%`])).toBe(0);
	});

	it('without --wait: the batch is received, exit 0, and the way to follow it is shown', async () => {
		const f = cleanFile('nowait.csv', 2);
		const r = await runCli(['upload', f.file], asDistrict());
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout).toMatch(/nowait\.csv: batch (\d+) (received|checking|done)/);
		expect(r.stderr).toMatch(/runnel batches \d+/);
	});

	it('stdin (-) is spooled, hashed and sent like a file', async () => {
		const f = cleanFile('stdin.csv', 2);
		const r = await runCli(['upload', '--wait', '--format', 'csv', '-'], { ...asDistrict(), input: readFileSync(f.file) });
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout).toMatch(/^stdin: batch \d+ done/);
		expect(await batchesWithSha(f.sha256)).toBe(1);
	});
});

describe('who may upload', () => {
	it('a state-wide token must say which district (usage, exit 3); with --district it works', async () => {
		const f = cleanFile('admin.csv', 1);
		const r = await runCli(['upload', f.file], { env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.admin } });
		expect(r.code).toBe(3);
		expect(r.stderr).toMatch(/--district CODE/);
		const ok = await runCli(['upload', '--wait', '--district', 'BLH', f.file], {
			env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.admin }
		});
		expect(ok.code, ok.stderr).toBe(0);
	});

	it('a token without records:write → exit 4', async () => {
		const f = cleanFile('manager.csv', 1);
		const r = await runCli(['upload', '--district', 'BLH', f.file], { env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.manager } });
		expect(r.code).toBe(4);
		expect(r.stderr).toMatch(/HTTP 403/);
	});

	it('a missing file is exit 1 and names the file; other files still go', async () => {
		const f = cleanFile('present.csv', 1);
		const r = await runCli(['upload', '--wait', path.join(dir, 'absent.csv'), f.file], asDistrict());
		expect(r.code).toBe(1);
		expect(r.stderr).toContain('absent.csv: no such file');
		expect(r.stdout).toMatch(/present\.csv: batch \d+ done/);
	});
});

/**
 * A TCP proxy in front of the app. For each accepted connection, `plan` says what to do:
 * `cut-request` forwards the first `after` bytes of the request and then drops the connection (the
 * upload is cut midway); `drop-answer` forwards everything, but once more than `after` request bytes
 * went through (the upload, not the small GET /me before it) it never relays the answer and drops the
 * connection (the hub made the batch, the client never heard); `pass` just forwards.
 */
async function proxy(
	target: string,
	plan: Array<{ kind: 'cut-request'; after: number } | { kind: 'drop-answer'; after: number } | { kind: 'pass' }>
) {
	const { port, hostname } = new URL(target);
	let n = 0;
	const server = net.createServer((client) => {
		const step = plan[Math.min(n++, plan.length - 1)];
		const upstream = net.connect(Number(port), hostname);
		let forwarded = 0;
		client.on('data', (chunk) => {
			if (step.kind === 'cut-request') {
				const room = step.after - forwarded;
				if (room <= 0) return;
				upstream.write(chunk.subarray(0, room));
				forwarded += Math.min(room, chunk.length);
				if (forwarded >= step.after) {
					client.destroy();
					upstream.destroy();
				}
			} else {
				forwarded += chunk.length;
				upstream.write(chunk);
			}
		});
		upstream.on('data', (chunk) => {
			if (step.kind === 'drop-answer' && forwarded > step.after) {
				client.destroy();
				upstream.destroy();
			} else client.write(chunk);
		});
		client.on('end', () => upstream.end());
		upstream.on('end', () => client.end());
		client.on('error', () => upstream.destroy());
		upstream.on('error', () => client.destroy());
	});
	await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
	return {
		url: `http://127.0.0.1:${(server.address() as net.AddressInfo).port}`,
		connections: () => n,
		close: () => new Promise<void>((r) => server.close(() => r()))
	};
}

describe('a cut connection never makes a second batch', () => {
	it('cut mid-upload: the CLI retries the whole file with the same key → exactly one batch', async () => {
		const f = cleanFile('cut-retry.csv', 3000);
		const p = await proxy(app.origin, [{ kind: 'cut-request', after: 64 * 1024 }, { kind: 'pass' }]);
		try {
			const r = await runCli(['upload', '--wait', f.file], { env: { RUNNEL_URL: p.url, RUNNEL_TOKEN: DEMO_TOKENS.district } });
			expect(r.code, r.stderr).toBe(0);
			expect(r.stderr).toMatch(/retrying in/);
			expect(r.stdout).toContain('3,000 created');
		} finally {
			await p.close();
		}
		expect(await batchesWithSha(f.sha256)).toBe(1);
	});

	it('cut mid-upload with no retries left: exit 1; re-running the same command → exactly one batch', async () => {
		const f = cleanFile('cut-rerun.csv', 3000);
		const p = await proxy(app.origin, [{ kind: 'cut-request', after: 64 * 1024 }]);
		try {
			const r = await runCli(['--retries', '0', 'upload', '--wait', f.file], {
				env: { RUNNEL_URL: p.url, RUNNEL_TOKEN: DEMO_TOKENS.district }
			});
			expect(r.code).toBe(1);
			expect(r.stderr).toMatch(/cut-rerun\.csv: cannot reach the hub at .*(reset|closed|hang up|ECONNRESET|EPIPE)/);
		} finally {
			await p.close();
		}
		const again = await runCli(['upload', '--wait', f.file], asDistrict());
		expect(again.code, again.stderr).toBe(0);
		expect(await batchesWithSha(f.sha256)).toBe(1);
	});

	it('the answer lost after the hub made the batch: the re-run gets that same batch back → exactly one batch', async () => {
		const f = cleanFile('lost-answer.csv', 200);
		const p = await proxy(app.origin, [{ kind: 'drop-answer', after: 2000 }]);
		try {
			const r = await runCli(['--retries', '0', 'upload', f.file], { env: { RUNNEL_URL: p.url, RUNNEL_TOKEN: DEMO_TOKENS.district } });
			expect(r.code, r.stderr).toBe(1);
		} finally {
			await p.close();
		}
		// The hub did receive it: one batch exists already.
		expect(await batchesWithSha(f.sha256)).toBe(1);
		const again = await runCli(['upload', '--wait', f.file], asDistrict());
		expect(again.code, again.stderr).toBe(0);
		expect(again.stderr).toContain('already sent with the same Idempotency-Key');
		expect(await batchesWithSha(f.sha256)).toBe(1);
		expect(await count('select count(*) as n from records where local_id like $1', [`${f.prefix}-%`])).toBe(200);
	});
});

describe('the demo upload files (seeds/demo)', () => {
	const DEMO = path.join(ROOT, 'seeds', 'demo');
	interface Mistake {
		row: number;
		column: string;
		code: string;
		severity: 'error' | 'warning';
		what: string;
	}
	const mistakes = (JSON.parse(readFileSync(path.join(DEMO, 'mistakes.json'), 'utf8')) as { mistakes: Mistake[] }).mistakes;
	const header = readFileSync(path.join(DEMO, 'mistakes.csv'), 'utf8').split(/\r?\n/)[0].split(',');

	it('the mistakes file: exit 2, and every documented mistake printed with its row and column', async () => {
		const r = await runCli(['upload', '--wait', path.join(DEMO, 'mistakes.csv')], asDistrict());
		expect(r.code, r.stderr).toBe(2);
		expect(r.stdout).toMatch(/^mistakes\.csv: batch \d+ done \(mode all, district BLH\): .*nothing saved \(mode all\)$/m);
		expect(mistakes.length).toBeGreaterThanOrEqual(12);
		for (const m of mistakes) {
			const col = header.indexOf(m.column) + 1;
			expect(col, m.column).toBeGreaterThan(0);
			expect(r.stdout, `${m.what}: expected mistakes.csv:${m.row}:${col}: ${m.severity} ${m.code}`).toMatch(
				new RegExp(`^mistakes\\.csv:${m.row}:${col}: ${m.severity} ${m.code}: .{10,}$`, 'm')
			);
		}
	});

	it.each(['clean.csv', 'clean.xlsx'])('%s: exit 0', async (name) => {
		const r = await runCli(['upload', '--wait', path.join(DEMO, name)], asDistrict());
		expect(r.code, r.stdout + r.stderr).toBe(0);
		expect(r.stdout).toMatch(new RegExp(`^${name.replace('.', '\\.')}: batch \\d+ done .* 0 rejected; 0 errors`, 'm'));
	});

	it('runnel check prints the same mistakes offline, before anything is sent', async () => {
		const counties = (
			await (
				await db()
			).query<{ c: string }>(
				`select dc.county_fips as c from district_counties dc join districts d on d.id = dc.district_id where d.code = 'BLH'`
			)
		).rows
			.map((x) => x.c.trim())
			.join(',');
		const r = await runCli(['check', '--offline', '--counties', counties, path.join(DEMO, 'mistakes.csv')]);
		expect(r.code).toBe(2);
		for (const m of mistakes)
			expect(r.stdout).toMatch(new RegExp(`^mistakes\\.csv:${m.row}:${header.indexOf(m.column) + 1}: ${m.severity} ${m.code}: `, 'm'));
		expect(r.stderr).toMatch(/mistakes\.csv: \d+ rows, \d+ accepted, \d+ rejected; \d+ errors, \d+ warnings/);
	});
});

describe('--quiet', () => {
	it('a night where every row went in prints nothing, even with warnings; rejected rows are still printed', async () => {
		const w = uniquePrefix('QW');
		const warned = path.join(dir, 'quiet-warned.csv');
		writeFileSync(warned, csv([...BASIC_HEADER, 'notes'], [[`${w}-1`, '340', BLH_COUNTY, '2024-10-01', '', '', '50', '', '=SUM(1,2)']]));
		const loud = await runCli(['upload', '--wait', '--idempotency-key', `${w}-loud`, warned], asDistrict());
		expect(loud.code, loud.stderr).toBe(0);
		expect(loud.stdout).toMatch(/^quiet-warned\.csv:2:9: warning formula-in-cell: /m);
		const ok = await runCli(['--quiet', 'upload', '--wait', warned], asDistrict());
		expect(ok.code, ok.stderr).toBe(0);
		expect(ok.stdout + ok.stderr).toBe('');
		const p = uniquePrefix('QB');
		const bad = path.join(dir, 'quiet-bad.csv');
		writeFileSync(bad, csv(BASIC_HEADER, [[`${p}-1`, '340', BLH_COUNTY, '2024-13-01', '', '', '50', '']]));
		const r = await runCli(['--quiet', 'upload', '--wait', bad], asDistrict());
		expect(r.code).toBe(2);
		expect(r.stdout).toMatch(/^quiet-bad\.csv:2:4: error /m);
	});
});
