// `runnel check` screens bioreactors with the hub's active reduction method when it can ask the hub, and
// with the built-in default method offline. A method whose minimum retention is 4 h (instead of the
// default 3 h) tells them apart: a 130 × 10 × 2 ft bed at porosity 0.70 holds 1,820 ft³ of water, 3.2 h at
// 15 % of the 1.050 cfs peak of 50 ac at 0.5 in/day (NRCS EFH Part 650 Ch. 14; CPS 605) — enough for 3 h,
// not for 4 h. The hub's own check of the same file (mode=check) gives the same findings as the CLI's.
import { mkdtempSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_METHOD } from '$lib/domain/reduction-method';
import { closeDb, getDb } from '$lib/server/db';
import { createMethod, getActiveMethodVersion, getMethod, setActiveMethod } from '$lib/server/methods';
import { DEMO_TOKENS, startApp } from '../helpers/app';
import { allFindings, BLH_COUNTY, closeTestDb, csv, waitForBatch } from '../helpers/batches';
import { runCli } from '../helpers/cli';

const VERSION = 'cli-check-4h.1';
let app: Awaited<ReturnType<typeof startApp>>;
let original = '';
const dir = mkdtempSync(path.join(os.tmpdir(), 'runnel-cli-method-'));
const body = csv(
	[
		'local_id',
		'practice_code',
		'county_fips',
		'installed_on',
		'drainage_area_acres',
		'drainage_coefficient_in_per_day',
		'bed_length_ft',
		'bed_width_ft',
		'bed_depth_ft'
	],
	[['CM-1', '605', BLH_COUNTY, '2024-10-01', '50', '0.5', '130', '10', '2']]
);
const file = path.join(dir, 'bed.csv');

beforeAll(async () => {
	app = await startApp();
	writeFileSync(file, body);
	const db = getDb();
	original = await getActiveMethodVersion(db);
	if (!(await getMethod(db, VERSION)))
		await createMethod(
			db,
			{
				...DEFAULT_METHOD,
				version: VERSION,
				label: 'Test: 4-hour minimum retention',
				bioreactor: { ...DEFAULT_METHOD.bioreactor, min_retention_hours: 4 }
			},
			'test'
		);
	await setActiveMethod(db, VERSION, 'test');
});
afterAll(async () => {
	if (original) await setActiveMethod(getDb(), original, 'test');
	await app?.close();
	await closeTestDb();
	await closeDb();
});

const codes = (fs: Array<{ code: string }>) => fs.map((f) => f.code).sort();

describe('runnel check and the active method', () => {
	it('asks the hub for its active method: the 4-hour minimum flags the bed, as the hub itself does', async () => {
		const r = await runCli(['check', '--json', '--counties', BLH_COUNTY, file], {
			env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district }
		});
		expect(r.code, r.stderr).toBe(0);
		expect(r.stderr).not.toMatch(/built-in default method/);
		const local = (JSON.parse(r.stdout) as Array<{ findings: Array<{ code: string; message: string }> }>)[0].findings;
		expect(codes(local)).toEqual(['bioreactor-retention-short', 'bioreactor-treats-under-15pct']);
		expect(local.find((f) => f.code === 'bioreactor-retention-short')!.message).toContain('3.2 hours, less than the 4.0-hour minimum');

		const res = await fetch(`${app.origin}/api/v1/batches?mode=check`, {
			method: 'POST',
			headers: { authorization: `Bearer ${DEMO_TOKENS.district}`, 'content-type': 'text/csv' },
			body
		});
		expect(res.status).toBe(202);
		const b = await waitForBatch(DEMO_TOKENS.district, ((await res.json()) as { id: string }).id);
		const server = await allFindings(DEMO_TOKENS.district, b.id);
		expect(server.map((f) => [f.code, f.message]).sort()).toEqual(local.map((f) => [f.code, f.message]).sort());
	});

	it('--offline uses the built-in default method (3 h): the same bed passes, and it says so', async () => {
		const r = await runCli(['check', '--json', '--offline', '--counties', BLH_COUNTY, file], {
			env: { RUNNEL_URL: app.origin, RUNNEL_TOKEN: DEMO_TOKENS.district }
		});
		expect(r.code, r.stderr).toBe(0);
		expect(r.stderr).toMatch(/built-in default method's parameters \(--offline\)/);
		expect((JSON.parse(r.stdout) as Array<{ findings: unknown[] }>)[0].findings).toEqual([]);
	});
});
