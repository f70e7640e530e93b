// `runnel records [ID]`: practice records with filters, or one record with its versions.
import { Option, type Command } from 'commander';
import type { Context } from '../context';
import { EXIT, UsageError } from '../exit-codes';
import { table } from '../output';
import type { Registry } from '../program';
import type { RecordDetail, RecordSummary } from '../../src/lib/schema/record-api';
import { wholeNumber } from '../program';

/** A record as the list answers it (src/lib/schema/record-api.ts). */
export type RecordRow = RecordSummary;

export interface RecordFilters {
	district?: string;
	county?: string;
	practice?: string;
	fy?: number;
	status?: string;
	localId?: string;
}

export function recordQuery(f: RecordFilters): Record<string, string | number | undefined> {
	return { district: f.district, county: f.county, practice: f.practice, fiscal_year: f.fy, status: f.status, local_id: f.localId };
}

export function addRecordFilters(cmd: Command): Command {
	return cmd
		.option('--district <code>', 'only this district (state-wide tokens)')
		.option('--county <fips>', 'only this county (5-digit FIPS)')
		.option('--practice <code>', 'only this practice code, e.g. 605')
		.addOption(new Option('--status <status>', 'installed or withdrawn').choices(['installed', 'withdrawn']))
		.option('--local-id <id>', "only the record with this district's own id");
}

async function listRecords(ctx: Context, opts: RecordFilters & { limit: number }): Promise<number> {
	const client = ctx.client();
	const q = { ...recordQuery(opts), limit: Math.min(500, opts.limit) };
	if (ctx.opts.json) {
		// One JSON array, written page by page.
		await ctx.ui.out('[');
		let first = true;
		for await (const rec of client.pages<RecordRow>('/api/v1/records', q, opts.limit)) {
			await ctx.ui.out((first ? '\n' : ',\n') + JSON.stringify(rec));
			first = false;
		}
		await ctx.ui.out(first ? ']\n' : '\n]\n');
		return EXIT.ok;
	}
	const rows: RecordRow[] = [];
	for await (const rec of client.pages<RecordRow>('/api/v1/records', q, opts.limit)) rows.push(rec);
	if (rows.length === 0) {
		ctx.ui.info('No records match.');
		return EXIT.ok;
	}
	await ctx.ui.out(
		table(
			['ID', 'DISTRICT', 'LOCAL ID', 'PRACTICE', 'COUNTY', 'INSTALLED', 'FY', 'STATUS', 'ACRES', 'VERSION'],
			rows.map((r) => [
				r.id,
				r.district.code,
				r.local_id,
				r.practice_code,
				r.county_fips,
				r.installed_on,
				r.fiscal_year,
				r.status,
				r.extent_acres ?? r.drainage_area_acres,
				r.version
			])
		)
	);
	if (rows.length === opts.limit) ctx.ui.info(`(first ${opts.limit}; raise --limit or use \`runnel export records\` for all)`);
	return EXIT.ok;
}

async function showRecord(ctx: Context, id: string): Promise<number> {
	if (!/^\d+$/.test(id))
		throw new UsageError(`A record id is a number (got ${JSON.stringify(id)}); to find a record by your own id use --local-id.`);
	const rec = await ctx.client().getJson<RecordDetail>(`/api/v1/records/${id}`);
	if (ctx.opts.json) {
		await ctx.ui.printJson(rec);
		return EXIT.ok;
	}
	await ctx.ui.line(
		`record ${rec.id}: ${rec.district.code} ${rec.local_id} (practice ${rec.practice_code}, ${rec.status}, version ${rec.version})`
	);
	for (const [k, v] of Object.entries(rec.data ?? {}))
		if (v !== null && v !== '') await ctx.ui.line(`  ${k}: ${typeof v === 'object' ? JSON.stringify(v) : String(v)}`);
	await ctx.ui.line('versions:');
	for (const v of rec.versions ?? [])
		await ctx.ui.line(
			`  ${v.version}  ${v.created_at.slice(0, 19).replace('T', ' ')}  ${v.batch ? `batch ${v.batch.id}` : v.actor}  ${v.changed_fields.length ? `changed: ${v.changed_fields.join(', ')}` : ''}`.trimEnd()
		);
	return EXIT.ok;
}

export function registerRecords(program: Command, r: Registry): Command {
	const cmd = program
		.command('records')
		.description('list practice records (with filters), or show one record and its versions')
		.argument('[id]', 'a record id');
	addRecordFilters(cmd)
		.addOption(new Option('--fy <year>', 'only records of this fiscal year').argParser(wholeNumber('--fy', 1950, 2100)))
		.addOption(new Option('--limit <n>', 'list at most this many records').argParser(wholeNumber('--limit', 1, 1_000_000)).default(50))
		.addHelpText(
			'after',
			`
Examples:
  $ runnel records --practice 605 --fy 2026
  $ runnel records --local-id BLH-2026-0042 --json
  $ runnel records 1234
  $ runnel export records --format csv -o records.csv     (everything, streamed)`
		)
		.action(
			r.action((ctx, id, opts) => (id ? showRecord(ctx, id as string) : listRecords(ctx, opts as RecordFilters & { limit: number })))
		);
	return cmd;
}
