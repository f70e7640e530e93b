// `npm run bench -- dataset`: the live research dataset streamed as CSV through the real app (a child
// process running build/index.js, so its memory is measured alone), against PostgreSQL's own
// `COPY (…) TO STDOUT WITH CSV` of the same source columns, measured in this same run:
//   (a) throughput: app rows/s ÷ COPY rows/s at 1,000,000 records (target ≥ 0.5)
//   (b) memory: the app's peak RSS while streaming 1,000,000 rows ÷ while streaming 100,000 (target ≤ 1.2)
// The records are invented (generated in bulk SQL, one district per Iowa county) and their stored
// estimates are written by SQL with invented numbers: this measures the dataset path (small-cell
// decisions, keyset reads, anonymisation, CSV encoding, HTTP), not the estimate computation (see the
// rollups benchmark for that).
// Env: BENCH_RECORDS (default 1,000,000), BENCH_SMALL (default 100,000).
import { spawn } from 'node:child_process';
import { readFileSync } from 'node:fs';
import net from 'node:net';
import path from 'node:path';
import pg from 'pg';
import { to as copyTo } from 'pg-copy-streams';
import { sql, type Kysely } from 'kysely';
import { build, buildIsStale } from '../lib/build';
import { carryPseudonymKey } from '../../src/lib/server/dataset/pseudonym';
import { ROOT } from '../lib/env';

const log = (m: string) => console.error(m);
const mb = (kb: number) => `${(kb / 1024).toFixed(0)} MB`;

function freePort(): Promise<number> {
	return new Promise((resolve, reject) => {
		const s = net.createServer();
		s.listen(0, '127.0.0.1', () => {
			const port = (s.address() as net.AddressInfo).port;
			s.close(() => resolve(port));
		});
		s.on('error', reject);
	});
}

function procKb(pid: number, field: 'VmRSS' | 'VmHWM'): number {
	const m = new RegExp(`^${field}:\\s+(\\d+) kB`, 'm').exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
	return m ? Number(m[1]) : NaN;
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any
async function generate(db: Kysely<any>, upTo: number, methodVersion: string): Promise<void> {
	const have = Number((await sql<{ n: string }>`select count(*) as n from records where local_id like 'DS%'`.execute(db)).rows[0].n);
	if (have >= upTo) return;
	log(`Generating records ${(have + 1).toLocaleString('en-US')}…${upTo.toLocaleString('en-US')}`);
	await sql`select setseed(0.17)`.execute(db);
	const PER = 100_000;
	for (let start = have + 1; start <= upTo; start += PER) {
		const end = Math.min(upTo, start + PER - 1);
		await sql`
			insert into records (district_id, local_id, version, practice_code, county_fips, installed_on, status,
				extent_acres, drainage_area_acres, field_id, operation_id, huc12, cost_total_usd, funding_program, data, content_hash)
			select d.id, 'DS' || g, 1, x.code, c.fips, x.installed_on, 'installed',
				case when p.credited_basis = 'extent_acres' then x.acres end,
				case when p.credited_basis = 'drainage_area_acres' then x.acres end,
				'F' || (x.f * 5000)::int, 'op-' || (x.o * 400)::int,
				'0708' || lpad(c.idx::text, 2, '0') || lpad((x.h * 4)::int::text, 2, '0') || '0101',
				round(x.acres * 50, 2), 'state cost-share', jsonb_build_object('local_id', 'DS' || g), md5('ds' || g)
			from generate_series(${start}::int, ${end}::int) as g
			join (select fips, (row_number() over (order by fips))::int as idx from counties where state_fips = '19') as c on c.idx = (g % 99) + 1
			join districts d on d.code = 'D' || substr(c.fips, 3)
			cross join lateral (
				select (array['340','340','340','590','554','605','604','656','393','329'])[1 + floor(random() * 10)::int] as code,
					date '2016-07-01' + floor(random() * 3650)::int as installed_on,
					(5 + floor(random() * 300))::numeric as acres, random() as f, random() as o, random() as h
				where g > 0
			) as x
			join practices p on p.code = x.code`.execute(db);
		// Stored estimates with invented efficiencies (what the rollups service would have written), with the
		// pseudonym key in the transaction as the rollups service has it, so each row gets its pid as it is written.
		await db.transaction().execute(async (trx) => {
			await carryPseudonymKey(trx as unknown as Parameters<typeof carryPseudonymKey>[0]);
			await sql`
			insert into record_estimates (record_id, method_version, counted, credited_acres, n_lb_mean, n_lb_low, n_lb_high,
				p_lb_mean, p_lb_low, p_lb_high, district_id, county_fips, huc8, practice_code, field_id, operation_key,
				cost_usd, state_fy_start_month, state_fy_installed, state_fy_first, state_fy_last,
				federal_fy_installed, federal_fy_first, federal_fy_last)
			select r.id, ${methodVersion}, true, a.acres, a.acres * 9.1, a.acres * 4.2, a.acres * 14.3, a.acres * 0.31, a.acres * 0.1, a.acres * 0.52,
				r.district_id, r.county_fips, substr(r.huc12, 1, 8), r.practice_code, r.field_id, r.operation_id, r.cost_total_usd, 7,
				f.fy, f.fy, f.fy + 9, f.ffy, f.ffy, f.ffy + 9
			from records r
			cross join lateral (select coalesce(r.extent_acres, r.drainage_area_acres) as acres) a
			cross join lateral (select extract(year from r.installed_on + interval '6 months')::int as fy,
				extract(year from r.installed_on + interval '3 months')::int as ffy) f
			where r.local_id like 'DS%' and substr(r.local_id, 3)::int between ${start} and ${end}`.execute(trx);
		});
		log(`  ${end.toLocaleString('en-US')}`);
	}
	await sql`analyze`.execute(db);
}

interface Measure {
	rows: number;
	bytes: number;
	ms: number;
	/** Peak RSS while streaming (sampled every 20 ms) and the process's high-water mark, kB. */
	streamPeakKb: number;
	hwmKb: number;
	/** RSS after start and after the first request (small-cell decisions built), kB. */
	idleKb: number;
	warmKb: number;
}

async function streamThroughApp(dbUrl: string, token: string): Promise<Measure> {
	const port = await freePort();
	const origin = `http://127.0.0.1:${port}`;
	// BENCH_CHILD_ARGS: extra node flags for the app, e.g. `--cpu-prof --cpu-prof-dir=/tmp/prof`.
	const extra = (process.env.BENCH_CHILD_ARGS ?? '').split(' ').filter(Boolean);
	const child = spawn(process.execPath, [...extra, path.join(ROOT, 'build', 'index.js')], {
		cwd: ROOT,
		env: {
			...process.env,
			DATABASE_URL: dbUrl,
			HOST: '127.0.0.1',
			PORT: String(port),
			ORIGIN: origin,
			NODE_ENV: 'production',
			LOG_LEVEL: 'silent',
			RUNNEL_SERVICES: '0',
			DATASET_RATE_LIMIT: '100000'
		},
		stdio: 'ignore'
	});
	try {
		for (let i = 0; ; i++) {
			try {
				if ((await fetch(`${origin}/api/v1/health`)).ok) break;
			} catch {
				/* not listening yet */
			}
			if (i > 300) throw new Error('the app did not start');
			await new Promise((r) => setTimeout(r, 100));
		}
		const pid = child.pid!;
		const headers = { authorization: `Bearer ${token}` };
		const idleKb = procKb(pid, 'VmRSS');
		const warm = await fetch(`${origin}/api/v1/dataset/records?limit=1`, { headers });
		if (warm.status !== 200) throw new Error(`warm-up answered ${warm.status}: ${await warm.text()}`);
		await warm.arrayBuffer();
		const warmKb = procKb(pid, 'VmRSS');
		let streamPeakKb = 0;
		const sampler = setInterval(() => (streamPeakKb = Math.max(streamPeakKb, procKb(pid, 'VmRSS'))), 20);
		const t = performance.now();
		const res = await fetch(`${origin}/api/v1/dataset/records?format=csv`, { headers });
		if (res.status !== 200) throw new Error(`the stream answered ${res.status}`);
		let bytes = 0;
		let lines = 0;
		for await (const chunk of res.body as unknown as AsyncIterable<Uint8Array>) {
			bytes += chunk.length;
			for (let i = 0; i < chunk.length; i++) if (chunk[i] === 10) lines++;
		}
		const ms = performance.now() - t;
		clearInterval(sampler);
		streamPeakKb = Math.max(streamPeakKb, procKb(pid, 'VmRSS'));
		return { rows: lines - 1, bytes, ms, streamPeakKb, hwmKb: procKb(pid, 'VmHWM'), idleKb, warmKb };
	} finally {
		child.kill('SIGTERM');
		await new Promise((r) => child.once('exit', r));
	}
}

/** PostgreSQL's own COPY … TO STDOUT WITH CSV of the same source columns and join the app reads. */
async function copyBaseline(dbUrl: string, methodVersion: string): Promise<{ rows: number; bytes: number; ms: number }> {
	const client = new pg.Client({ connectionString: dbUrl });
	await client.connect();
	try {
		const q = `copy (
			select e.record_id, e.practice_code, p.name as practice_name, e.county_fips, d.region, e.huc8,
				r.installed_on, e.state_fy_installed, e.state_fy_first, e.state_fy_last,
				e.credited_acres, e.n_lb_mean, e.n_lb_low, e.n_lb_high, e.p_lb_mean, e.p_lb_low, e.p_lb_high, r.funding_program
			from record_estimates e
				join records r on r.id = e.record_id
				join districts d on d.id = e.district_id
				join practices p on p.code = e.practice_code
			where e.method_version = '${methodVersion.replace(/'/g, "''")}' and (r.status = 'installed' or e.state_fy_first is not null)
			order by e.record_id
		) to stdout with csv header`;
		const t = performance.now();
		const stream = client.query(copyTo(q));
		let bytes = 0;
		let lines = 0;
		for await (const chunk of stream as AsyncIterable<Buffer>) {
			bytes += chunk.length;
			for (let i = 0; i < chunk.length; i++) if (chunk[i] === 10) lines++;
		}
		return { rows: lines - 1, bytes, ms: performance.now() - t };
	} finally {
		await client.end();
	}
}

export async function run(): Promise<void> {
	const N = Number(process.env.BENCH_RECORDS ?? 1_000_000);
	const SMALL = Number(process.env.BENCH_SMALL ?? 100_000);
	process.env.RUNNEL_SERVICES = '0';
	process.env.LOG_LEVEL = 'silent';
	if (buildIsStale()) build(log);
	const dbUrl = process.env.DATABASE_URL!;

	const { getDb, closeDb } = await import('../../src/lib/server/db');
	const { migrator } = await import('../../src/lib/server/db/migrations');
	const { seedReference } = await import('../../seeds/reference');
	const { hashToken } = await import('../../src/lib/server/auth/tokens');
	const { getActiveMethodVersion } = await import('../../src/lib/server/methods');
	const db = getDb();
	const { error } = await migrator(db).migrateToLatest();
	if (error) throw error;
	await seedReference(db);
	await sql`insert into districts (code, name, region)
		select 'D' || substr(fips, 3), name || ' bench district', 'Region ' || (substr(fips, 3)::int % 5)
		from counties where state_fips = '19' on conflict (code) do nothing`.execute(db);
	const user = await db
		.insertInto('users')
		.values({ email: 'bench-researcher@runnel.test', name: 'Bench researcher', role: 'researcher', district_id: null, password_hash: null })
		.onConflict((oc) => oc.expression(sql`lower(email)`).doUpdateSet({ name: 'Bench researcher' }))
		.returning('id')
		.executeTakeFirstOrThrow();
	const token = 'rnl_bench_researcher_token';
	await db
		.insertInto('api_tokens')
		.values({ user_id: user.id, name: 'bench', token_hash: hashToken(token), display_prefix: 'rnl_benc', scopes: ['dataset:read'] })
		.onConflict((oc) => oc.column('token_hash').doNothing())
		.execute();
	const version = await getActiveMethodVersion(db);

	const results: { n: number; app: Measure; copy: { rows: number; bytes: number; ms: number } }[] = [];
	for (const n of [SMALL, N]) {
		await generate(db, n, version);
		log(`Streaming ${n.toLocaleString('en-US')} records: the app, then COPY…`);
		const app = await streamThroughApp(dbUrl, token);
		const copy = await copyBaseline(dbUrl, version);
		results.push({ n, app, copy });
	}
	await closeDb();

	const rate = (rows: number, ms: number) => rows / (ms / 1000);
	console.log('\nResearch dataset benchmark (live CSV stream through the app vs PostgreSQL COPY, same run)');
	console.log(
		'records   | app rows | app s  | app rows/s | COPY rows/s | app ÷ COPY | RSS idle | after decisions | peak while streaming | high-water'
	);
	for (const r of results) {
		console.log(
			`${r.n.toLocaleString('en-US').padStart(9)} | ${r.app.rows.toLocaleString('en-US').padStart(8)} | ${(r.app.ms / 1000).toFixed(1).padStart(6)} | ${Math.round(rate(r.app.rows, r.app.ms)).toLocaleString('en-US').padStart(10)} | ${Math.round(rate(r.copy.rows, r.copy.ms)).toLocaleString('en-US').padStart(11)} | ${(rate(r.app.rows, r.app.ms) / rate(r.copy.rows, r.copy.ms)).toFixed(2).padStart(10)} | ${mb(r.app.idleKb).padStart(8)} | ${mb(r.app.warmKb).padStart(15)} | ${mb(r.app.streamPeakKb).padStart(20)} | ${mb(r.app.hwmKb)}`
		);
	}
	const [small, big] = results;
	const ratio = rate(big.app.rows, big.app.ms) / rate(big.copy.rows, big.copy.ms);
	console.log(
		`\n(a) throughput at ${big.n.toLocaleString('en-US')}: app ÷ COPY = ${ratio.toFixed(2)} (target ≥ 0.5: ${ratio >= 0.5 ? 'met' : 'NOT met'})`
	);
	const peak = big.app.streamPeakKb / small.app.streamPeakKb;
	const hwm = big.app.hwmKb / small.app.hwmKb;
	console.log(
		`(b) peak RSS while streaming, ${big.n.toLocaleString('en-US')} ÷ ${small.n.toLocaleString('en-US')} = ${peak.toFixed(2)} (target ≤ 1.2: ${peak <= 1.2 ? 'met' : 'NOT met'}); process high-water mark incl. the small-cell decisions ${hwm.toFixed(2)}`
	);
	console.log(`    rows published ÷ source rows: ${(big.app.rows / big.copy.rows).toFixed(3)} (the rest are in suppressed cells)`);
}
