// `runnel check --type events` (offline, the hub's own event checker) and `runnel upload --type events`
// (the real batch API): the demo events mistakes file gives its findings by row and column and exit 2;
// the clean file uploads with exit 0 and re-sends with the same derived key.
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { closeTestDb, DEMO_DIR } from '../helpers/batches';
import { runCli } from '../helpers/cli';

let app: { origin: string; close: () => Promise<void> };
beforeAll(async () => {
	app = await startApp();
});
afterAll(async () => {
	await app?.close();
	await closeTestDb();
});

interface Mistake {
	row: number;
	column: string;
	code: string;
	severity: string;
}
const manifest = JSON.parse(readFileSync(path.join(DEMO_DIR, 'events-mistakes.json'), 'utf8')) as { mistakes: Mistake[] };
const MISTAKES = path.join(DEMO_DIR, 'events-mistakes.csv');
const CLEAN = path.join(DEMO_DIR, 'events-clean.csv');
const COLUMNS = readFileSync(MISTAKES, 'utf8').split(/\r?\n/)[0].split(',');
/** The rules only the hub can apply (they need the district's practice records). */
const HUB_ONLY = new Set(['practice-unknown', 'before-installed', 'kind-unusual-for-practice']);
const asDistrict = () => ({ env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district } });

describe('runnel check --type events (offline)', () => {
	it('reports every mistake that needs no hub, by row and column number, and exits 2', async () => {
		const r = await runCli(['check', '--type', 'events', '--today', '2026-12-01', MISTAKES]);
		expect(r.code, r.stderr).toBe(2);
		const lines = r.stdout.trim().split('\n');
		const expected = manifest.mistakes
			.filter((m) => !HUB_ONLY.has(m.code))
			.map((m) => `events-mistakes.csv:${m.row}:${COLUMNS.indexOf(m.column) + 1}: ${m.severity} ${m.code}:`);
		for (const prefix of expected)
			expect(
				lines.some((l) => l.includes(prefix)),
				`${prefix}\n${r.stdout}`
			).toBe(true);
		expect(lines).toHaveLength(expected.length);
		expect(r.stderr).toContain('not checking that each local_id is one of your practice records');
	});

	it('--json gives the same findings with rows and columns, and the clean file passes (exit 0)', async () => {
		const r = await runCli(['check', '--type', 'events', '--json', '--today', '2026-12-01', MISTAKES, CLEAN]);
		expect(r.code).toBe(2);
		const out = JSON.parse(r.stdout) as Array<{
			file: string;
			findings: Array<{ row: number; column: string; code: string }>;
			stats: { rows: number; schema_version: string };
		}>;
		expect(out[0].findings.map((f) => `${f.row}|${f.column}|${f.code}`)).toEqual(
			manifest.mistakes.filter((m) => !HUB_ONLY.has(m.code)).map((m) => `${m.row}|${m.column}|${m.code}`)
		);
		expect(out[1].findings).toEqual([]);
		expect(out[1].stats.rows).toBe(12);
		const clean = await runCli(['check', '--type', 'events', CLEAN]);
		expect(clean.code, clean.stdout + clean.stderr).toBe(0);
	});

	it('the same file checked as practice records is a different schema (missing columns)', async () => {
		const r = await runCli(['check', '--offline', CLEAN]);
		expect(r.code).toBe(2);
		expect(r.stdout).toContain('missing-column');
	});
});

describe('runnel upload --type events', () => {
	it('a dry run of the mistakes file on the hub also finds the practice rules, and exits 2', async () => {
		const r = await runCli(['upload', '--type', 'events', '--dry-run', '--wait', '--json', MISTAKES], asDistrict());
		expect(r.code, r.stderr).toBe(2);
		const [res] = JSON.parse(r.stdout) as Array<{
			batch: { type: string; mode: string };
			findings: Array<{ row: number; column: string; code: string }>;
		}>;
		expect(res.batch.type).toBe('events');
		expect(res.batch.mode).toBe('check');
		expect(res.findings.map((f) => `${f.row}|${f.column}|${f.code}`).sort()).toEqual(
			manifest.mistakes.map((m) => `${m.row}|${m.column}|${m.code}`).sort()
		);
	});

	it('uploads the clean file (exit 0); running it again replays the same batch', async () => {
		const first = await runCli(['upload', '--type', 'events', '--wait', '--json', CLEAN], asDistrict());
		expect(first.code, first.stderr).toBe(0);
		const [a] = JSON.parse(first.stdout) as Array<{
			idempotency_key: string;
			batch: { id: string; type: string; counts: { rows: number; rejected: number } };
		}>;
		expect(a.batch.type).toBe('events');
		expect(a.batch.counts).toMatchObject({ rows: 12, rejected: 0 });
		expect(a.idempotency_key).toContain('.events-all.');
		const again = await runCli(['upload', '--type', 'events', '--wait', '--json', CLEAN], asDistrict());
		expect(again.code).toBe(0);
		const [b] = JSON.parse(again.stdout) as Array<{ replayed: boolean; batch: { id: string } }>;
		expect(b.replayed).toBe(true);
		expect(b.batch.id).toBe(a.batch.id);
	});
});
