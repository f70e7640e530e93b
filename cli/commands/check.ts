// `runnel check FILE…`: the hub's own reader and checker, run here, offline. Prints findings like a
// compiler (file:row:column: severity code: message) or --json, and exits 2 when any is an error.
import { createReadStream } from 'node:fs';
import { Option, type Command } from 'commander';
import type { Context } from '../context';
import { CliError, EXIT, UsageError, worstExit } from '../exit-codes';
import { displayName, FILE_FORMATS, fileSize, resolveFormat, type FileFormat } from '../files';
import { formatFinding } from '../findings-format';
import type { Registry } from '../program';
import type { ReductionMethod } from '../../src/lib/domain/reduction-method';
import type { Me } from './whoami';

interface CheckOptions {
	/** What the files hold: practice records (default) or upkeep events. */
	type?: 'records' | 'events';
	sheet?: string;
	format?: FileFormat;
	district?: string;
	counties?: string[];
	state?: string;
	offline?: boolean;
	today?: string;
}

interface DistrictJson {
	code: string;
	name: string;
	counties: Array<{ fips: string }>;
}

function parseCounties(v: string): string[] {
	const list = v
		.split(/[\s,]+/)
		.map((s) => s.trim())
		.filter(Boolean);
	if (list.length === 0 || !list.every((c) => /^\d{5}$/.test(c)))
		throw new UsageError('--counties takes 5-digit county FIPS codes, comma-separated (e.g. 19109,19063).');
	return list;
}

/**
 * The counties the district serves, for the served-county rule: --counties, else asked of the hub
 * (when a URL and token are known and --offline is not given), else null (the rule is skipped).
 */
async function districtCounties(ctx: Context, opts: CheckOptions): Promise<{ counties: Set<string> | null; from: string }> {
	if (opts.counties) return { counties: new Set(opts.counties), from: '--counties' };
	if (opts.offline) return { counties: null, from: '--offline' };
	const s = ctx.settings();
	if (!s.url || !s.token) return { counties: null, from: 'no hub configured' };
	const client = ctx.client();
	try {
		let district: DistrictJson | undefined;
		if (opts.district)
			district = await client.getJson<DistrictJson>(`/api/v1/districts/${encodeURIComponent(opts.district.toUpperCase())}`);
		else {
			const me = await client.getJson<Me>('/api/v1/me');
			if (me.district_id === null) return { counties: null, from: `a ${me.role} token (no district; pass --district CODE)` };
			const list = await client.getJson<{ items?: DistrictJson[]; data?: DistrictJson[] }>('/api/v1/districts');
			const items = list.items ?? list.data ?? [];
			if (items.length === 1) district = items[0];
		}
		if (!district) return { counties: null, from: 'the hub did not say which district' };
		return { counties: new Set(district.counties.map((c) => c.fips)), from: `district ${district.code} on ${client.baseUrl}` };
	} catch (e) {
		if (e instanceof CliError && e.exitCode === EXIT.auth) throw e;
		ctx.ui.warn(`could not ask the hub for your district's counties (${(e as Error).message}); checking without them.`);
		return { counties: null, from: 'the hub could not be asked' };
	}
}

/**
 * The reduction method whose bioreactor screening parameters (minimum retention, design share of peak,
 * default porosity) the design checks use: the hub's active method when a hub is configured and not
 * --offline, else the method built into this CLI (the hub's default).
 */
async function screeningMethod(ctx: Context, opts: CheckOptions): Promise<{ method: ReductionMethod | undefined; from: string }> {
	if (opts.offline) return { method: undefined, from: '--offline' };
	const s = ctx.settings();
	if (!s.url || !s.token) return { method: undefined, from: 'no hub configured' };
	const client = ctx.client();
	try {
		const active = await client.getJson<{ version: string }>('/api/v1/settings/active-method');
		const stored = await client.getJson<{ method: unknown }>(`/api/v1/methods/${encodeURIComponent(active.version)}`);
		const { ReductionMethodSchema } = await import('../../src/lib/schema/reduction-method');
		const parsed = ReductionMethodSchema.safeParse(stored.method);
		if (!parsed.success) return { method: undefined, from: `the hub's method ${active.version} could not be read` };
		return { method: parsed.data, from: `method ${active.version} on ${client.baseUrl}` };
	} catch (e) {
		if (e instanceof CliError && e.exitCode === EXIT.auth) throw e;
		return { method: undefined, from: `the hub could not be asked (${(e as Error).message})` };
	}
}

async function check(ctx: Context, files: string[], opts: CheckOptions): Promise<number> {
	if (files.filter((f) => f === '-').length > 1) throw new UsageError('stdin (-) can be read only once.');
	for (const f of files) resolveFormat(f, opts.format);
	if (opts.state !== undefined && !/^\d{2}$/.test(opts.state)) throw new UsageError('--state takes a 2-digit state FIPS code (e.g. 19).');
	if (opts.today !== undefined && !/^\d{4}-\d{2}-\d{2}$/.test(opts.today)) throw new UsageError('--today takes a date as YYYY-MM-DD.');
	// The shared checker (zod schema, county shapes) loads only when something is checked.
	const [{ checkFile, checkEventFile }, { offlineCheckContext, hubTimeZone }, { todayIn }] = await Promise.all([
		import('../../src/lib/server/ingest/check-file'),
		import('../../src/lib/server/ingest/context'),
		import('../../src/lib/domain/calendar-date')
	]);
	const events = opts.type === 'events';
	// Events: the practices they name are at the hub, so offline the known-practice and install-date rules are skipped.
	if (events)
		ctx.ui.info(
			'note: not checking that each local_id is one of your practice records at the hub (only an upload can); every other rule is checked.'
		);
	const { counties, from } = events ? { counties: null, from: '' } : await districtCounties(ctx, opts);
	const stateFips = opts.state ?? (counties && counties.size > 0 ? [...counties][0].slice(0, 2) : (ctx.io.env.RUNNEL_STATE_FIPS ?? '19'));
	if (!counties && !events)
		ctx.ui.info(`note: not checking that counties are served by your district (${from}); give --district, --counties, or log in.`);
	const screening = await screeningMethod(ctx, opts);
	if (!screening.method)
		ctx.ui.info(`note: bioreactor design screening uses the built-in default method's parameters (${screening.from}).`);
	const checkCtx = offlineCheckContext({ stateFips, districtCounties: counties, today: opts.today, method: screening.method });

	const codes: number[] = [];
	const json = ctx.opts.json;
	if (json) await ctx.ui.out('[');
	for (const [i, file] of files.entries()) {
		const label = displayName(file);
		const format = resolveFormat(file, opts.format);
		if (file !== '-') {
			try {
				fileSize(file);
			} catch (e) {
				ctx.ui.error((e as Error).message);
				codes.push(EXIT.error);
				continue;
			}
		}
		const input = file === '-' ? ctx.io.stdin : createReadStream(file);
		let errors = 0;
		let firstFinding = true;
		if (json) await ctx.ui.out(`${i > 0 ? ',' : ''}\n{"file":${JSON.stringify(label)},"findings":[`);
		const emit = async (f: import('../../src/lib/schema/findings').Finding) => {
			if (f.severity === 'error') errors++;
			if (json) {
				await ctx.ui.out((firstFinding ? '\n' : ',\n') + JSON.stringify(f));
				firstFinding = false;
			} else await ctx.ui.line(formatFinding(label, f, ctx.ui));
		};
		try {
			const checked = events
				? checkEventFile(input, format, { today: opts.today ?? todayIn(hubTimeZone()), practices: null }, { sheet: opts.sheet })
				: checkFile(input, format, checkCtx, { sheet: opts.sheet });
			for await (const e of checked) {
				if (e.kind === 'file-finding') await emit(e.finding);
				else if (e.kind === 'row') for (const f of e.findings) await emit(f);
				else if (e.kind === 'end') {
					const s = e.stats;
					if (json) await ctx.ui.out(`${firstFinding ? '' : '\n'}],"stats":${JSON.stringify(s)}}`);
					else
						ctx.ui.info(
							`${label}: ${s.rows} rows, ${s.accepted} accepted, ${s.rejected} rejected; ${s.findings.errors} errors, ${s.findings.warnings} warnings (schema ${s.schema_version})`
						);
				}
			}
		} catch (e) {
			const err = e as NodeJS.ErrnoException;
			throw new CliError(`${label}: cannot read it (${err.code ?? err.message})`);
		}
		codes.push(errors > 0 ? EXIT.rejected : EXIT.ok);
	}
	if (json) await ctx.ui.out('\n]\n');
	return worstExit(codes);
}

export function registerCheck(program: Command, r: Registry): Command {
	return program
		.command('check')
		.description("check files offline with the hub's own rules; nothing is sent")
		.argument('<file...>', 'files to check (CSV, XLSX, NDJSON, JSON); - reads stdin (then pass --format)')
		.addOption(
			new Option('--type <type>', 'records: practice records; events: upkeep events (schema practice-event)')
				.choices(['records', 'events'])
				.default('records')
		)
		.option('--sheet <name>', 'the XLSX sheet to read (default: the first)')
		.addOption(new Option('--format <format>', 'the file format when the name does not tell it').choices([...FILE_FORMATS]))
		.option('--district <code>', "check counties against this district's (asked of the hub)")
		.addOption(new Option('--counties <fips,…>', 'the counties your district serves (fully offline)').argParser(parseCounties))
		.option('--state <fips>', "the hub's state (2-digit FIPS; default: from the counties, else 19)")
		.option('--offline', 'do not ask the hub anything, even when logged in')
		.option('--today <date>', 'check "not in the future" against this date (YYYY-MM-DD) instead of today')
		.addHelpText(
			'after',
			`
The reader and checker are the hub's own code, so the findings are the ones an
upload would get. The one rule that needs the hub — "the county is served by your
district" — uses --counties, or asks the hub when you are logged in (or
RUNNEL_URL/RUNNEL_TOKEN are set); --offline skips it. Bioreactor (605) design
screening warnings use the hub's active reduction method when the hub can be
asked, else the default method built into this CLI.

Findings go to stdout, one per line: FILE:ROW:COLUMN: SEVERITY CODE: MESSAGE
(ROW counts the header as row 1; COLUMN is the column number). The summary
goes to stderr. Exit code 2 when any finding is an error, 0 otherwise.

Examples:
  $ runnel check practices.csv
  $ runnel check --json practices.xlsx --sheet 2026 | jq '.[0].stats'
  $ runnel check --offline --counties 19109,19063 practices.csv
  $ export-practices | runnel check --format ndjson -
  $ runnel check --type events upkeep.csv      (upkeep events)`
		)
		.action(r.action((ctx, files, opts) => check(ctx, files as string[], opts as CheckOptions)));
}
