// `npm run bench -- rollups`: 1,000,000 practice records over Iowa's 99 counties and 12 state FYs
// (generated in bulk SQL; invented data), a full summary build, then three ratios measured in this process:
//   (a) GET /api/v1/rollups median latency ÷ the bare SQL read of the stored summary it answers from (target ≤ 2)
//   (b) a naive GROUP BY over the records for the same answer ÷ that summary read (expect ≥ 20)
//   (c) the summary refresh after a 10,000-row batch ÷ that batch's record writes (target ≤ 0.1)
// Env: BENCH_RECORDS (default 1,000,000), BENCH_RUNS (default 25).
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { pathToFileURL } from 'node:url';
import { sql } from 'kysely';
import { build, buildIsStale } from '../lib/build';
import { ROOT } from '../lib/env';

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
	if (buildIsStale()) build(log);

	const { getDb, closeDb } = await import('../../src/lib/server/db');
	const { migrator } = await import('../../src/lib/server/db/migrations');
	const { seedReference } = await import('../../seeds/reference');
	const { hashToken } = await import('../../src/lib/server/auth/tokens');
	const { getActiveMethodVersion } = await import('../../src/lib/server/methods');
	const { rebuildMethod, refreshRecords } = await import('../../src/lib/server/rollups/refresh');
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
		.execute();

	log(`Generating ${N.toLocaleString('en-US')} records…`);
	await sql`select setseed(0.42)`.execute(db);
	const PER = 100_000;
	for (let start = 1; start <= N; start += PER) {
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
	log(`Building the summary for method ${version} from all records…`);
	t = performance.now();
	await rebuildMethod(db, version, (p) => {
		if (p.done === p.total || p.done % 100_000 < 5000)
			log(`  ${p.phase} ${p.done.toLocaleString('en-US')} / ${p.total.toLocaleString('en-US')}`);
	});
	const fullMs = performance.now() - t;
	await sql`analyze`.execute(db);
	const cells = Number((await sql<{ n: string }>`select count(*) as n from rollup_cells`.execute(db)).rows[0].n);

	// --- (a) API vs bare summary read ---------------------------------------------------------------------------
	const handler = (await import(pathToFileURL(path.join(ROOT, 'build', 'handler.js')).href)).handler as http.RequestListener;
	const server = http.createServer(handler);
	await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
	const origin = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
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
		const body = (await res.json()) as { groupings: { cells: unknown[] }[] };
		if (res.status !== 200) throw new Error(`API answered ${res.status}: ${JSON.stringify(body)}`);
		return { ms: performance.now() - s, cells: body.groupings[0].cells.length };
	};
	const bare = async () => {
		const s = performance.now();
		const r = await groupingSql(grouping, src).execute(db);
		await totalsSql(src).execute(db);
		return { ms: performance.now() - s, cells: r.rows.length };
	};
	for (let i = 0; i < 3; i++) {
		await api();
		await bare();
	}
	const apiTimes: number[] = [];
	const bareTimes: number[] = [];
	let apiCells = 0;
	for (let i = 0; i < RUNS; i++) {
		const a = await api();
		apiTimes.push(a.ms);
		apiCells = a.cells;
		bareTimes.push((await bare()).ms);
	}
	server.close();

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
				extract(year from least(r.installed_on + make_interval(years => p.lifespan_years) - 1, coalesce(r.withdrawn_on, 'infinity'::date)) + interval '6 months')::int
			) as g(fy)
			where g.fy between 2016 and 2027
			group by r.county_fips, g.fy`.execute(db);
		return { ms: performance.now() - s, cells: r.rows.length };
	};
	await naive();
	const naiveTimes: number[] = [];
	let naiveCells = 0;
	for (let i = 0; i < 3; i++) {
		const n = await naive();
		naiveTimes.push(n.ms);
		naiveCells = n.cells;
	}

	// --- (c) a 10,000-row batch: its writes, then the summary refresh ------------------------------------------
	const batch = async (round: number) => {
		const district = await db.selectFrom('districts').select('id').where('code', '=', 'D153').executeTakeFirstOrThrow();
		const existing = (
			await sql<{
				id: string;
			}>`select id::text as id from records where district_id = ${district.id} order by id limit 2000 offset ${round * 2000}`.execute(db)
		).rows.map((r) => r.id);
		return db.transaction().execute(async (trx) => {
			const s = performance.now();
			const rows = Array.from({ length: 8000 }, (_, i) => {
				const code = ['340', '605', '554', '604', '590'][i % 5];
				const edge = code === '605' || code === '554' || code === '604';
				const acres = 10 + ((i * 37) % 290);
				const data = {
					local_id: `batch${round}-${i}`,
					practice_code: code,
					county_fips: '19153',
					installed_on: `2026-${String(1 + (i % 12)).padStart(2, '0')}-15`,
					extent_acres: edge ? null : acres,
					drainage_area_acres: edge ? acres : null,
					field_id: `F${i % 3000}`,
					operation_id: `op-${i % 700}`,
					huc12: '070801050101',
					cost_total_usd: acres * 100,
					cost_share_usd: acres * 75,
					funding_program: 'state cost-share',
					notes: 'Installed to the practice standard; checked by district staff on site.'
				};
				return {
					district_id: district.id,
					local_id: data.local_id,
					version: 1,
					practice_code: code,
					county_fips: '19153',
					installed_on: data.installed_on,
					status: 'installed' as const,
					withdrawn_on: null,
					extent_acres: data.extent_acres,
					drainage_area_acres: data.drainage_area_acres,
					field_id: data.field_id,
					operation_id: data.operation_id,
					huc12: data.huc12,
					cost_total_usd: data.cost_total_usd,
					cost_share_usd: data.cost_share_usd,
					funding_program: data.funding_program,
					data: JSON.stringify(data),
					content_hash: `h${round}-${i}`
				};
			});
			const ids: string[] = [];
			for (let i = 0; i < rows.length; i += 1000) {
				const ins = await trx
					.insertInto('records')
					.values(rows.slice(i, i + 1000))
					.returning(['id', 'data'])
					.execute();
				await trx
					.insertInto('record_versions')
					.values(
						ins.map((r) => ({
							record_id: r.id,
							version: 1,
							data: JSON.stringify(r.data),
							changed_fields: [],
							batch_id: null,
							actor: 'bench'
						}))
					)
					.execute();
				ids.push(...ins.map((r) => String(r.id)));
			}
			await sql`update records r set drainage_area_acres = coalesce(r.drainage_area_acres, 0) + 1, extent_acres = coalesce(r.extent_acres, 0) + 1,
					version = r.version + 1, data = r.data || jsonb_build_object('changed', ${round}), updated_at = now()
				where r.id = any(${existing}::bigint[])`.execute(trx);
			await sql`insert into record_versions (record_id, version, data, changed_fields, actor)
				select id, version, data, array['extent_acres', 'drainage_area_acres'], 'bench' from records where id = any(${existing}::bigint[])`.execute(
				trx
			);
			const write = performance.now() - s;
			const r0 = performance.now();
			await refreshRecords(trx, [...ids, ...existing]);
			return { write, refresh: performance.now() - r0 };
		});
	};
	const batches = [];
	for (let i = 0; i < 3; i++) batches.push(await batch(i));

	const a = median(apiTimes) / median(bareTimes);
	const b = median(naiveTimes) / median(bareTimes);
	const c = median(batches.map((x) => x.refresh)) / median(batches.map((x) => x.write));
	console.log(`\nRollups benchmark — ${N.toLocaleString('en-US')} records, 99 counties, state FY2016–FY2027, method ${version}`);
	console.log(`  setup: generate ${ms(genMs)}, full summary build ${ms(fullMs)} (${cells.toLocaleString('en-US')} cells)`);
	console.log(
		`  (a) API median ${ms(median(apiTimes))} (${apiCells} cells) ÷ bare summary read ${ms(median(bareTimes))} = ${a.toFixed(2)}   (target ≤ 2)`
	);
	console.log(
		`  (b) naive GROUP BY over records ${ms(median(naiveTimes))} (${naiveCells} cells) ÷ summary read = ${b.toFixed(1)}   (expect ≥ 20)`
	);
	console.log(
		`  (c) refresh after a 10,000-row batch ${ms(median(batches.map((x) => x.refresh)))} ÷ its record writes ${ms(median(batches.map((x) => x.write)))} = ${c.toFixed(2)}   (target ≤ 0.1)`
	);
	await closeDb();
}
