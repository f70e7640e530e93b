// `npm run bench -- rollups`: 1,000,000 practice records over Iowa's 99 counties and 12 state FYs
// (generated in bulk SQL; invented data), a full summary build, then three ratios measured in this process:
//   (a) GET /api/v1/rollups median latency ÷ the bare SQL read of the stored summary it answers from (target ≤ 2)
//   (b) a naive GROUP BY over the records for the same answer ÷ that summary read (expect ≥ 20)
//   (c) the summary refresh (bringing the cells up to date) within the intake of a 10,000-row file of one district
//       ÷ that intake (target ≤ 0.1); beside it, the same refresh's re-making of the records' stored estimates
//       and the whole refresh, each ÷ that intake (three files, after a smaller warm-up file that is not counted)
// Env: BENCH_RECORDS (default 1,000,000), BENCH_RUNS (default 25); with DATABASE_URL, an earlier run's database
// (records and summary) is reused.
import { spawn } from 'node:child_process';
import { createReadStream, mkdtempSync, rmSync, statSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { sql } from 'kysely';
import { stringify } from 'csv-stringify/sync';
import { BENCH_PRINCIPAL } from './intake';
import { build, buildIsStale } from '../lib/build';
import { ROOT } from '../lib/env';
import { startFakeS3Process } from '../lib/fake-s3';
import { freePort } from '../lib/postgres';

const log = (m: string) => console.error(m);
const median = (xs: number[]) => {
	const s = [...xs].sort((a, b) => a - b);
	return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
const ms = (x: number) => `${x.toFixed(x < 10 ? 2 : 0)} ms`;

export async function run(): Promise<void> {
	const N = Number(process.env.BENCH_RECORDS ?? 1_000_000);
	const RUNS = Number(process.env.BENCH_RUNS ?? 25);
	process.env.RUNNEL_SERVICES = '0'; // no background rebuilds while measuring
	process.env.LOG_LEVEL = 'silent';
	if (process.env.BENCH_ONLY_REFRESH !== '1' && buildIsStale()) build(log);
	// Object storage for the intake in (c): a fake S3 server in a child process, as the intake benchmark uses.
	const s3 = await startFakeS3Process();
	Object.assign(process.env, s3.env);
	process.once('exit', () => s3.stop());

	const { getDb, closeDb } = await import('../../src/lib/server/db');
	const { migrator } = await import('../../src/lib/server/db/migrations');
	const { seedReference } = await import('../../seeds/reference');
	const { hashToken } = await import('../../src/lib/server/auth/tokens');
	const { getActiveMethodVersion } = await import('../../src/lib/server/methods');
	const { rebuildDistricts, rebuildMethod, refreshClock } = await import('../../src/lib/server/rollups/refresh');
	const { createBatch } = await import('../../src/lib/server/batches/create');
	const { processBatch } = await import('../../src/lib/server/batches/process');
	const { stopBoss } = await import('../../src/lib/server/batches/queue');
	const { closeObjectStore } = await import('../../src/lib/server/storage/object-store');
	const { PRACTICE_RECORD_COLUMNS } = await import('../../src/lib/schema/practice-record');
	const { groupingSql, totalsSql } = await import('../../src/lib/server/rollups/query');
	const { parseGrouping } = await import('../../src/lib/schema/rollups');
	const db = getDb();

	const { error } = await migrator(db).migrateToLatest();
	if (error) throw error;
	await seedReference(db);

	// --- scenario: one district per county, 1M records -----------------------------------------------------
	let t = performance.now();
	await sql`insert into districts (code, name, region)
		select 'D' || substr(fips, 3), name || ' bench district', 'Region ' || (substr(fips, 3)::int % 5)
		from counties where state_fips = '19' on conflict (code) do nothing`.execute(db);
	await sql`insert into district_counties (district_id, county_fips)
		select d.id, c.fips from counties c join districts d on d.code = 'D' || substr(c.fips, 3)
		where c.state_fips = '19' on conflict do nothing`.execute(db);
	const user = await db
		.insertInto('users')
		.values({ email: 'bench-manager@runnel.test', name: 'Bench manager', role: 'manager', district_id: null, password_hash: null })
		.onConflict((oc) => oc.expression(sql`lower(email)`).doUpdateSet({ name: 'Bench manager' }))
		.returning('id')
		.executeTakeFirstOrThrow();
	const token = 'rnl_bench_manager_token';
	await db
		.insertInto('api_tokens')
		.values({
			user_id: user.id,
			name: 'bench',
			token_hash: hashToken(token),
			display_prefix: 'rnl_benc',
			scopes: ['records:read', 'rollups:read']
		})
		.onConflict((oc) => oc.column('token_hash').doNothing())
		.execute();

	// With DATABASE_URL pointing at a database of an earlier run, the records already there are kept.
	const have = Number((await sql<{ n: string }>`select count(*) as n from records where local_id like 'B%'`.execute(db)).rows[0].n);
	if (have < N) log(`Generating ${(N - have).toLocaleString('en-US')} records…`);
	await sql`select setseed(0.42)`.execute(db);
	const PER = 100_000;
	for (let start = have + 1; start <= N; start += PER) {
		const end = Math.min(N, start + PER - 1);
		await sql`
			insert into records (district_id, local_id, version, practice_code, county_fips, installed_on, status, withdrawn_on,
				extent_acres, drainage_area_acres, field_id, operation_id, huc12, cost_total_usd, cost_share_usd, funding_program, data, content_hash)
			select d.id, 'B' || g, 1, x.code, c.fips, x.installed_on,
				case when x.w < 0.03 then 'withdrawn' else 'installed' end,
				case when x.w < 0.03 then x.installed_on + (365 + (x.w * 100000)::int % 2000) end,
				case when p.credited_basis = 'extent_acres' then x.acres end,
				case when p.credited_basis = 'drainage_area_acres' then x.acres end,
				case when x.f < 0.5 then 'F' || (x.f * 5000)::int end,
				case when x.o < 0.9 then 'op-' || (x.o * 889)::int end,
				case when x.h < 0.7 then '0708' || lpad(c.idx::text, 2, '0') || lpad((x.h * 4)::int::text, 2, '0') || '0101' end,
				round((x.acres * case when p.credited_basis = 'extent_acres' then 45 else 210 end)::numeric, 2),
				round((x.acres * case when p.credited_basis = 'extent_acres' then 40 else 150 end)::numeric, 2),
				'state cost-share', jsonb_build_object('local_id', 'B' || g), md5(g::text)
			from generate_series(${start}::int, ${end}::int) as g
			join (select fips, (row_number() over (order by fips))::int as idx from counties where state_fips = '19') as c on c.idx = (g % 99) + 1
			join districts d on d.code = 'D' || substr(c.fips, 3)
			cross join lateral (
				select (array['340','340','340','340','590','590','554','605','605','604','656','393','329','329'])[1 + floor(random() * 14)::int] as code,
					date '2015-07-01' + floor(random() * 4383)::int as installed_on,
					(5 + floor(random() * 300))::numeric as acres,
					random() as w, random() as f, random() as o, random() as h
				where g > 0
			) as x
			join practices p on p.code = x.code`.execute(db);
		log(`  ${end.toLocaleString('en-US')}`);
	}
	await sql`analyze`.execute(db);
	const genMs = performance.now() - t;

	const version = await getActiveMethodVersion(db);
	// An earlier run's (c) files left their records in districts D153 and D001 (the generated records'
	// operations, so they would make every later round's operations larger): remove them and rebuild those
	// districts' estimates and cells, so a run on a reused database starts where a fresh one does.
	const d153 = await db.selectFrom('districts').select(['id', 'code']).where('code', '=', 'D153').executeTakeFirstOrThrow();
	const d001 = await db.selectFrom('districts').select(['id', 'code']).where('code', '=', 'D001').executeTakeFirstOrThrow();
	const leftover = sql`select id from records where district_id in (${d153.id}, ${d001.id}) and local_id like 'batch-%'`;
	const left = Number((await sql<{ n: string }>`select count(*) as n from (${leftover}) t`.execute(db)).rows[0].n);
	if (left > 0) {
		log(`Removing ${left.toLocaleString('en-US')} records an earlier run's batches left in ${d153.code} and ${d001.code}…`);
		for (const table of [
			'record_estimates',
			'record_versions',
			'record_findings',
			'record_reviews',
			'review_queue',
			'verification_visits',
			'practice_events'
		] as const)
			await sql`delete from ${sql.table(table)} where record_id in (${leftover})`.execute(db);
		await sql`delete from records where id in (${leftover})`.execute(db);
		await rebuildDistricts(db, version, [d153.id, d001.id]);
		await sql`vacuum analyze records, record_estimates, rollup_cells`.execute(db);
		// Written out now, so the measurements below do not share the disk with a checkpoint of this clean-up
		// (needs a superuser or pg_checkpoint; without it the server checkpoints in its own time).
		await sql`checkpoint`
			.execute(db)
			.catch(() => log('  (no CHECKPOINT privilege: measuring while the clean-up may still be written out)'));
	}
	const state = await db.selectFrom('rollup_refresh').select('status').where('method_version', '=', version).executeTakeFirst();
	let fullMs = NaN;
	if (state?.status !== 'ready' || have < N || process.env.BENCH_REBUILD === '1') {
		log(`Building the summary for method ${version} from all records…`);
		t = performance.now();
		let shown = 0;
		await rebuildMethod(db, version, (p) => {
			if (p.done === p.total || p.done - shown >= 100_000) {
				shown = p.done;
				log(`  ${p.done.toLocaleString('en-US')} / ${p.total.toLocaleString('en-US')} records`);
			}
		});
		fullMs = performance.now() - t;
	}
	await sql`analyze`.execute(db);
	const cells = Number((await sql<{ n: string }>`select count(*) as n from rollup_cells`.execute(db)).rows[0].n);

	const apiTimes: number[] = [];
	const bareTimes: number[] = [];
	const naiveTimes: number[] = [];
	let apiCells = 0;
	let apiBytes = 0;
	let naiveCells = 0;
	// BENCH_ONLY_REFRESH=1: only (c), for iterating on the refresh (no app build needed).
	if (process.env.BENCH_ONLY_REFRESH !== '1') {
		// --- (a) API vs bare summary read ---------------------------------------------------------------------------
		// The app runs as its own process (build/index.js, as in production), so the client's work does not share
		// its event loop; a request is timed from sending it to the last byte of the body.
		const port = await freePort();
		const origin = `http://127.0.0.1:${port}`;
		const app = spawn(process.execPath, [path.join(ROOT, 'build', 'index.js')], {
			cwd: ROOT,
			env: {
				...process.env,
				HOST: '127.0.0.1',
				PORT: String(port),
				ORIGIN: origin,
				NODE_ENV: 'production',
				LOG_LEVEL: 'silent',
				RUNNEL_SERVICES: '0'
			},
			stdio: 'ignore'
		});
		for (let i = 0; ; i++) {
			try {
				if ((await fetch(`${origin}/api/v1/health`)).ok) break;
			} catch {
				/* not listening yet */
			}
			if (i > 600) throw new Error('the app did not start');
			await new Promise((r) => setTimeout(r, 100));
		}
		const query = 'group=county,fy&fy=2016..2027&basis=in_service';
		const grouping = parseGrouping('county,fy');
		const src = {
			methodVersion: version,
			fyBasis: 'state' as const,
			basis: 'in_service' as const,
			fy: { from: 2016, to: 2027 },
			districtId: null,
			county: null,
			practice: null
		};
		const api = async () => {
			const s = performance.now();
			const res = await fetch(`${origin}/api/v1/rollups?${query}`, { headers: { authorization: `Bearer ${token}` } });
			const body = await res.arrayBuffer();
			const took = performance.now() - s;
			// Parsed after the clock stops: the client's decoding is not the server's latency.
			const parsed = JSON.parse(Buffer.from(body).toString('utf8')) as { groupings: { cells: unknown[] }[] };
			if (res.status !== 200) throw new Error(`API answered ${res.status}: ${JSON.stringify(parsed)}`);
			return { ms: took, cells: parsed.groupings[0].cells.length, bytes: body.byteLength };
		};
		const bare = async () => {
			const s = performance.now();
			// The same two summary reads the API makes, side by side as it makes them.
			const [r] = await Promise.all([groupingSql(grouping, src).execute(db), totalsSql(src).execute(db)]);
			return { ms: performance.now() - s, cells: r.rows.length };
		};
		for (let i = 0; i < 3; i++) {
			await api();
			await bare();
		}
		for (let i = 0; i < RUNS; i++) {
			const a = await api();
			apiTimes.push(a.ms);
			apiCells = a.cells;
			apiBytes = a.bytes;
			bareTimes.push((await bare()).ms);
		}
		app.kill('SIGTERM');
		await new Promise((r) => app.once('exit', r));

		// --- (b) naive GROUP BY over the records, same answer ------------------------------------------------------
		const naive = async () => {
			const s = performance.now();
			const r = await sql`
				select r.county_fips, g.fy, count(*) as practices, count(distinct r.district_id || ':' || coalesce(r.operation_id, '')) as operations,
					sum(e.credited_acres) as acres, sum(coalesce(r.cost_total_usd, 0)) as cost, sum(coalesce(r.cost_share_usd, 0)) as cost_share,
					sum(e.n_lb_mean), sum(e.n_lb_low), sum(e.n_lb_high), sum(e.p_lb_mean), sum(e.p_lb_low), sum(e.p_lb_high)
				from records r
				join practices p on p.code = r.practice_code
				join record_estimates e on e.record_id = r.id and e.method_version = ${version}
				cross join lateral generate_series(
					extract(year from r.installed_on + interval '6 months')::int,
					extract(year from least((r.installed_on + make_interval(years => p.lifespan_years))::date - 1, coalesce(r.withdrawn_on, 'infinity'::date)) + interval '6 months')::int
				) as g(fy)
				where g.fy between 2016 and 2027
				group by r.county_fips, g.fy`.execute(db);
			return { ms: performance.now() - s, cells: r.rows.length };
		};
		await naive();
		for (let i = 0; i < 3; i++) {
			const n = await naive();
			naiveTimes.push(n.ms);
			naiveCells = n.cells;
		}
	}

	// --- (c) a 10,000-row file of one district through the real intake, and the refresh's share of it -----------
	// Each round sends one CSV file to district D153 (8,000 new records, 2,000 changed ones: their acres + 1)
	// through createBatch + processBatch — upload to a temp file, archive in object storage, stream back,
	// parse, check, write in 1,000-row chunks — and times the whole intake. The summary refresh runs inside
	// it (afterRecordsChanged, once per batch before it commits); its own time is read from refreshClock.
	const runId = Date.now().toString(36);
	const tmp = mkdtempSync(path.join(os.tmpdir(), 'runnel-bench-rollups-'));
	const admin = BENCH_PRINCIPAL;
	const num = (v: unknown) => (v === null || v === undefined ? '' : String(v));
	const batch = async (round: number | 'warm-up', district = d153, county = '19153', size = 8000) => {
		const { rows: existing } = await sql<Record<string, string | null>>`
			select local_id, practice_code, county_fips, installed_on::text as installed_on, status, withdrawn_on::text as withdrawn_on,
				extent_acres + 1 as extent_acres, drainage_area_acres + 1 as drainage_area_acres, field_id, operation_id, huc12,
				cost_total_usd, cost_share_usd, funding_program
			from records where district_id = ${district.id} and installed_on < current_date
				and (withdrawn_on is null or withdrawn_on < current_date)
			order by id limit ${size / 4} offset ${round === 'warm-up' ? 0 : round * 2000}`.execute(db);
		const rows: Record<string, unknown>[] = [];
		for (let i = 0; i < size; i++) {
			const code = ['340', '605', '554', '604', '590'][i % 5];
			const edge = code === '605' || code === '554' || code === '604';
			const acres = 10 + ((i * 37) % 290);
			rows.push({
				local_id: `batch-${runId}-${round}-${i}`,
				practice_code: code,
				county_fips: county,
				installed_on: `2026-${String(1 + (i % 11)).padStart(2, '0')}-15`,
				status: 'installed',
				extent_acres: edge ? null : acres,
				drainage_area_acres: edge ? acres : null,
				// About half the practices share a field with one or two others (stacking).
				field_id: i % 2 === 0 ? `N${runId}-${round}-${Math.floor(i / 6)}` : null,
				operation_id: `op-${i % 700}`,
				huc12: '070801050101',
				cost_total_usd: acres * 100,
				cost_share_usd: acres * 75,
				funding_program: 'state cost-share'
			});
			// The changed records are spread through the file (one in five rows).
			if (i % 4 === 3 && existing[(i - 3) / 4]) rows.push(existing[(i - 3) / 4]);
		}
		const file = path.join(tmp, `round-${round}.csv`);
		writeFileSync(file, stringify([[...PRACTICE_RECORD_COLUMNS], ...rows.map((r) => PRACTICE_RECORD_COLUMNS.map((c) => num(r[c])))]));
		const before = { ...refreshClock };
		const s = performance.now();
		const answer = await createBatch(admin, {
			mode: 'all',
			format: 'csv',
			contentType: 'text/csv',
			districtCode: district.code,
			sheet: null,
			fileName: `round-${round}.csv`,
			idempotencyKey: `bench-rollups-${runId}-${round}`,
			contentLength: statSync(file).size,
			body: createReadStream(file)
		});
		await processBatch(answer.body.id);
		const intake = performance.now() - s;
		const done = await db
			.selectFrom('batches')
			.select(['status', 'rows', 'accepted', 'errors', 'created', 'updated', 'unchanged'])
			.where('id', '=', answer.body.id)
			.executeTakeFirstOrThrow();
		if (done.created !== size || done.updated !== existing.length)
			throw new Error(`the batch did not write as planned: ${JSON.stringify(done)}`);
		return {
			intake,
			refresh: refreshClock.ms - before.ms,
			estimates: refreshClock.estimatesMs - before.estimatesMs,
			summary: refreshClock.summaryMs - before.summaryMs,
			calls: refreshClock.calls - before.calls,
			rows: done.rows
		};
	};
	const batches = [];
	try {
		// One smaller file in another district first, not counted: the three measured files then run code the
		// engine has already optimised, as in a worker that has taken files before (the API part warms up too).
		const w = await batch('warm-up', d001, '19001', 2000);
		log(`  warm-up (2,500 rows, ${d001.code}, not counted): intake ${ms(w.intake)}, refresh ${ms(w.refresh)}`);
		for (let i = 0; i < 3; i++) {
			const b = await batch(i);
			log(
				`  batch ${i + 1}: intake ${ms(b.intake)}, refresh ${ms(b.refresh)} in ${b.calls} calls (estimates ${ms(b.estimates)}, summary cells ${ms(b.summary)})`
			);
			batches.push(b);
		}
	} finally {
		await stopBoss();
		await closeObjectStore();
		s3.stop();
		rmSync(tmp, { recursive: true, force: true });
	}

	const a = median(apiTimes) / median(bareTimes);
	const b = median(naiveTimes) / median(bareTimes);
	const c = median(batches.map((x) => x.summary / x.intake));
	const cEstimates = median(batches.map((x) => x.estimates / x.intake));
	const cWhole = median(batches.map((x) => x.refresh / x.intake));
	console.log(`\nRollups benchmark — ${N.toLocaleString('en-US')} records, 99 counties, state FY2016–FY2027, method ${version}`);
	console.log(`  setup: generate ${ms(genMs)}, full summary build ${ms(fullMs)} (${cells.toLocaleString('en-US')} cells)`);
	console.log(
		`  (a) API median ${ms(median(apiTimes))} (${apiCells} cells, ${Math.round(apiBytes / 1024)} KB) ÷ bare summary read ${ms(median(bareTimes))} = ${a.toFixed(2)}   (target ≤ 2)`
	);
	console.log(
		`  (b) naive GROUP BY over records ${ms(median(naiveTimes))} (${naiveCells} cells) ÷ summary read = ${b.toFixed(1)}   (expect ≥ 20)`
	);
	console.log(
		`  (c) summary refresh (the cells) within the intake of a 10,000-row file ÷ that intake = ${c.toFixed(3)}, the median of the ${batches.length} files' ${batches.map((x) => (x.summary / x.intake).toFixed(3)).join(', ')} (medians ${ms(median(batches.map((x) => x.summary)))} and ${ms(median(batches.map((x) => x.intake)))})   (target ≤ 0.1)`
	);
	console.log(
		`      and the records' stored estimates re-made and written in the same refresh ${ms(median(batches.map((x) => x.estimates)))} ÷ intake = ${cEstimates.toFixed(3)}; the whole refresh ÷ intake = ${cWhole.toFixed(3)}`
	);
	console.log(
		`  load average at the end: ${os
			.loadavg()
			.map((x) => x.toFixed(1))
			.join(' ')} on ${os.cpus().length} CPUs`
	);
	await closeDb();
}
