// `npm run bench -- intake`: 100,000 valid generated rows through the whole intake pipeline (stream the
// upload to a temp file with SHA-256, archive in object storage, stream it back, parse, check, upsert,
// versions) against a raw `COPY` of the same rows into a bare table, in the same run on the same database.
// Prints the ratios and the peak RSS. Targets (issue 4): intake/copy ≤ 3, peak RSS ≤ 300 MB,
// re-sending the same rows (all unchanged) in less than half the first run's time.
import { createReadStream, createWriteStream, mkdtempSync, readdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { once } from 'node:events';
import os from 'node:os';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { sql } from 'kysely';
import { stringify } from 'csv-stringify/sync';
import { from as copyFrom } from 'pg-copy-streams';
import { startFakeS3Process } from '../lib/fake-s3';

const ROWS = Number(process.env.BENCH_ROWS ?? 100_000);

function prng(seed: number): () => number {
	let a = seed >>> 0;
	return () => {
		a = (a + 0x6d2b79f5) >>> 0;
		let t = a;
		t = Math.imul(t ^ (t >>> 15), t | 1);
		t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
		return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
	};
}

async function writeRows(file: string, columns: readonly string[], counties: string[], codes: { code: string; inField: boolean }[]) {
	const r = prng(42);
	const out = createWriteStream(file);
	const write = async (s: string) => {
		if (!out.write(s)) await once(out, 'drain');
	};
	await write(stringify([[...columns]]));
	let batch: unknown[][] = [];
	for (let i = 1; i <= ROWS; i++) {
		const p = codes[i % codes.length];
		const day = 1 + Math.floor(r() * 28);
		const month = 1 + Math.floor(r() * 12);
		const year = 2016 + Math.floor(r() * 10);
		const total = Math.round(2000 + r() * 20000);
		const row: Record<string, unknown> = {
			local_id: `BENCH-${String(i).padStart(7, '0')}`,
			practice_code: p.code,
			county_fips: counties[i % counties.length],
			installed_on: `${year}-${String(month).padStart(2, '0')}-${String(day).padStart(2, '0')}`,
			status: 'installed',
			extent_acres: p.inField ? Math.round((5 + r() * 150) * 10) / 10 : '',
			drainage_area_acres: p.inField ? '' : Math.round((10 + r() * 80) * 10) / 10,
			field_id: `F-${Math.floor(i / 3)}`,
			operation_id: `OP-${Math.floor(i / 40)}`,
			cost_total_usd: total,
			cost_share_usd: Math.round(total * 0.75),
			funding_program: 'State cost share'
		};
		batch.push(columns.map((c) => row[c] ?? ''));
		if (batch.length === 2000) {
			await write(stringify(batch));
			batch = [];
		}
	}
	if (batch.length) await write(stringify(batch));
	out.end();
	await once(out, 'finish');
}

const mb = (bytes: number) => Math.round(bytes / 1024 / 1024);

const CLOCK_TICKS = 100; // Linux USER_HZ: /proc/<pid>/stat times are in 1/100 s

/** CPU seconds (user + system) a process has used, from /proc (Linux). */
function procCpu(pid: number): number {
	try {
		const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
		const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
		return (Number(f[11]) + Number(f[12])) / CLOCK_TICKS;
	} catch {
		return 0;
	}
}

/** The PostgreSQL server processes: the postmaster's children (backends, writers, autovacuum). */
function postgresPids(postmaster: number): number[] {
	return readdirSync('/proc')
		.filter((d) => /^\d+$/.test(d))
		.map(Number)
		.filter((pid) => {
			try {
				const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
				return Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]) === postmaster || pid === postmaster;
			} catch {
				return false;
			}
		});
}

/**
 * CPU seconds of everything taking part: this process, the PostgreSQL server and the fake S3 server.
 * On a busy machine wall-clock times swing with other load; CPU time measures the work itself.
 */
function cpuMeter(postmaster: number, s3Pid: number) {
	const own = () => {
		const u = process.cpuUsage();
		return (u.user + u.system) / 1e6;
	};
	const total = () => own() + procCpu(s3Pid) + postgresPids(postmaster).reduce((a, p) => a + procCpu(p), 0);
	return async <T>(fn: () => Promise<T>): Promise<{ value: T; wall: number; cpu: number }> => {
		const c0 = total();
		const t0 = performance.now();
		const value = await fn();
		return { value, wall: (performance.now() - t0) / 1000, cpu: total() - c0 };
	};
}

/** The admin client the intake benchmarks send batches as. */
export const BENCH_PRINCIPAL = {
	kind: 'client' as const,
	userId: null,
	email: null,
	name: 'Benchmark',
	role: 'admin' as const,
	districtId: null,
	scopes: ['records:write' as const],
	credentialId: 'bench',
	expiresAt: null
};

export async function run(): Promise<void> {
	const s3 = await startFakeS3Process();
	Object.assign(process.env, s3.env);
	process.env.LOG_LEVEL ??= 'warn';
	const tmp = mkdtempSync(path.join(os.tmpdir(), 'runnel-bench-intake-'));
	const { migrateToLatest } = await import('../migrate');
	const { seedReference } = await import('../../seeds/reference');
	const { seedDemo } = await import('../../seeds/demo');
	const { getDb, getPool, closeDb } = await import('../../src/lib/server/db');
	const { createBatch } = await import('../../src/lib/server/batches/create');
	const { processBatch } = await import('../../src/lib/server/batches/process');
	const { stopBoss } = await import('../../src/lib/server/batches/queue');
	const { closeObjectStore } = await import('../../src/lib/server/storage/object-store');
	const { PRACTICE_RECORD_COLUMNS } = await import('../../src/lib/schema/practice-record');
	const { PRACTICE_CATALOG } = await import('../../src/lib/domain/practice-catalog');
	try {
		await migrateToLatest();
		await seedReference(getDb());
		await seedDemo(getDb());
		const district = await getDb().selectFrom('districts').select(['id', 'code']).where('code', '=', 'BLH').executeTakeFirstOrThrow();
		const counties = (
			await getDb().selectFrom('district_counties').select('county_fips').where('district_id', '=', district.id).execute()
		).map((c) => c.county_fips.trim());
		const codes = PRACTICE_CATALOG.map((p) => ({ code: p.code, inField: p.credited_basis === 'extent_acres' }));
		const file = path.join(tmp, 'bench.csv');
		await writeRows(file, PRACTICE_RECORD_COLUMNS, counties, codes);
		const size = statSync(file).size;
		console.log(`intake benchmark: ${ROWS.toLocaleString()} rows, ${mb(size)} MB CSV`);
		const rssBefore = process.memoryUsage().rss;

		const dataDir = (await sql<{ setting: string }>`select setting from pg_settings where name = 'data_directory'`.execute(getDb())).rows[0]
			.setting;
		const postmaster = Number(readFileSync(path.join(dataDir, 'postmaster.pid'), 'utf8').split('\n')[0]);
		const measure = cpuMeter(postmaster, s3.pid);

		// Baseline: COPY of the same file into a bare table of text columns.
		const client = await getPool().connect();
		let copy: { wall: number; cpu: number };
		try {
			await client.query(`drop table if exists bench_copy`);
			await client.query(`create table bench_copy (${PRACTICE_RECORD_COLUMNS.map((c) => `"${c}" text`).join(', ')})`);
			copy = await measure(() =>
				pipeline(createReadStream(file), client.query(copyFrom(`copy bench_copy from stdin with (format csv, header true)`)))
			);
			await client.query(`drop table bench_copy`);
		} finally {
			client.release();
		}

		const principal = BENCH_PRINCIPAL;
		const send = (key: string) =>
			measure(async () => {
				const answer = await createBatch(principal, {
					mode: 'all',
					format: 'csv',
					contentType: 'text/csv',
					districtCode: district.code,
					sheet: null,
					fileName: 'bench.csv',
					idempotencyKey: key,
					contentLength: size,
					body: createReadStream(file)
				});
				await processBatch(answer.body.id);
				return getDb()
					.selectFrom('batches')
					.select(['rows', 'accepted', 'errors', 'created', 'unchanged'])
					.where('id', '=', answer.body.id)
					.executeTakeFirstOrThrow();
			});
		// BENCH_MEM=1 (with node --expose-gc): live heap every 3 s, to tell retained memory from garbage not yet collected.
		const gc = (globalThis as { gc?: () => void }).gc;
		const sampler = process.env.BENCH_MEM
			? setInterval(() => {
					gc?.();
					const m = process.memoryUsage();
					console.log(`  memory: RSS ${mb(m.rss)} MB, live heap ${mb(m.heapUsed)} MB`);
				}, 3000)
			: null;
		const first = await send(`bench-1-${Date.now()}`);
		if (first.value.accepted !== ROWS) throw new Error(`benchmark rows were not all accepted: ${JSON.stringify(first.value)}`);
		const again = await send(`bench-2-${Date.now()}`);
		if (again.value.unchanged !== ROWS) throw new Error(`re-send was not all unchanged: ${JSON.stringify(again.value)}`);

		if (sampler) clearInterval(sampler);
		const peakRss = process.resourceUsage().maxRSS * 1024;
		const line = (label: string, m: { wall: number; cpu: number }) =>
			console.log(`  ${label.padEnd(30)} ${m.wall.toFixed(2).padStart(7)} s wall  ${m.cpu.toFixed(2).padStart(7)} s CPU`);
		line('COPY into a bare table', copy);
		line(`intake (${first.value.created.toLocaleString()} created)`, first);
		line(`re-send (${again.value.unchanged.toLocaleString()} unchanged)`, again);
		console.log(`  load average during the run: ${os.loadavg()[0].toFixed(1)} on ${os.cpus().length} CPUs`);
		console.log(`intake/copy ratio: ${(first.wall / copy.wall).toFixed(2)} wall, ${(first.cpu / copy.cpu).toFixed(2)} CPU   (target ≤ 3)`);
		console.log(`peak RSS: ${mb(peakRss)} MB   (target ≤ 300 MB; ${mb(rssBefore)} MB before the first batch)`);
		console.log(
			`re-send/first ratio: ${(again.wall / first.wall).toFixed(2)} wall, ${(again.cpu / first.cpu).toFixed(2)} CPU   (target < 0.5)`
		);
	} finally {
		await stopBoss();
		await closeObjectStore();
		await closeDb();
		s3.stop();
		rmSync(tmp, { recursive: true, force: true });
	}
}
