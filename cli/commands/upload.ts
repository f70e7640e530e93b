// `runnel upload FILE…`: sends each file to the hub as a batch, streamed from disk, with an
// Idempotency-Key derived from the district and the file's SHA-256 (so a re-run never makes a second
// batch), retried with backoff; `--wait` follows the batch until it is checked and prints its findings.
import { createReadStream } from 'node:fs';
import { setTimeout as delay } from 'node:timers/promises';
import { Option, type Command } from 'commander';
import { batchExitCode, isFinished, summarizeBatch, type BatchView } from '../batch-view';
import type { Context } from '../context';
import { CliError, EXIT, UsageError, worstExit } from '../exit-codes';
import { CONTENT_TYPES, displayName, FILE_FORMATS, fileSize, hashFile, resolveFormat, spoolStdin, type FileFormat } from '../files';
import { formatFinding } from '../findings-format';
import { HttpError, type ApiClient } from '../http';
import { deriveIdempotencyKey, isValidIdempotencyKey } from '../idempotency';
import { formatBytes } from '../output';
import { fileProgress } from '../progress';
import { parseRetryAfter } from '../backoff';
import type { Registry } from '../program';
import { positiveNumber, wholeNumber } from '../program';
import type { Finding } from '../../src/lib/schema/findings';
import type { Me } from './whoami';

export interface UploadOptions {
	mode: 'all' | 'valid' | 'check';
	/** What the files hold: practice records (default) or upkeep events. */
	type: 'records' | 'events';
	dryRun?: boolean;
	wait?: boolean;
	idempotencyKey?: string;
	district?: string;
	sheet?: string;
	format?: FileFormat;
	waitTimeout: number;
	maxFindings: number;
}

interface FileResult {
	file: string;
	idempotency_key: string;
	replayed: boolean;
	batch: BatchView;
	findings?: Finding[];
	findings_not_shown?: number;
	exit: number;
}

/**
 * What the derived key is scoped to: a district token's own district (by id, whether or not --district
 * repeats it, so both spellings of the same upload share one key), else the --district code.
 */
async function districtRef(client: ApiClient, opts: UploadOptions): Promise<string> {
	const me = await client.getJson<Me>('/api/v1/me');
	if (me.district_id !== null) return `id${me.district_id}`;
	if (opts.district) return opts.district.toUpperCase();
	throw new UsageError(`This token (${me.role}) is not bound to a district: pass --district CODE to say which district the file is for.`);
}

function contentDisposition(name: string): string {
	const ascii = name.replace(/[^\x20-\x7e]|["\\]/g, '_');
	return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name)}`;
}

export async function waitForBatch(
	client: ApiClient,
	batch: BatchView,
	opts: { timeoutSeconds: number; onRows?: (n: number) => void; pollMs?: number }
): Promise<BatchView> {
	const deadline = Date.now() + opts.timeoutSeconds * 1000;
	let current = batch;
	while (!isFinished(current)) {
		if (Date.now() > deadline)
			throw new CliError(
				`batch ${current.id} is still ${current.status} after ${opts.timeoutSeconds} s (${current.progress.rows_done} rows checked); follow it with \`runnel batches ${current.id}\`.`
			);
		const { data, response } = await client.json<BatchView>({ path: current.links?.self ?? `/api/v1/batches/${current.id}` });
		current = data;
		opts.onRows?.(current.progress.rows_done);
		if (isFinished(current)) break;
		const asked = parseRetryAfter(response.headers['retry-after'] as string | undefined);
		await delay(Math.min(10_000, Math.max(50, opts.pollMs ?? asked ?? 1000)));
	}
	return current;
}

/** The first `max` findings of a batch (errors first), and how many were not fetched. */
export async function batchFindings(client: ApiClient, batch: BatchView, max: number): Promise<{ findings: Finding[]; notShown: number }> {
	const total = batch.counts.errors + batch.counts.warnings;
	const findings: Finding[] = [];
	if (total === 0 || max === 0) return { findings, notShown: total };
	for await (const f of client.pages<Finding>(`/api/v1/batches/${batch.id}/findings`, { limit: Math.min(1000, max) }, max))
		findings.push(f);
	return { findings, notShown: Math.max(0, total - findings.length) };
}

async function uploadOne(
	ctx: Context,
	client: ApiClient,
	input: string,
	opts: UploadOptions,
	district: () => Promise<string>
): Promise<FileResult> {
	const ui = ctx.ui;
	const format = resolveFormat(input, opts.format);
	const label = displayName(input);
	let spooled: { file: string; discard: () => void } | null = null;
	try {
		if (input === '-') spooled = await spoolStdin(ctx.io.stdin);
		const file = spooled?.file ?? input;
		const size = fileSize(file);
		const { sha256 } = await hashFile(file);
		// Events get keys of their own (the same bytes sent as records would be another request).
		const keyMode = opts.type === 'events' ? `events-${opts.mode}` : opts.mode;
		const key = opts.idempotencyKey ?? deriveIdempotencyKey({ district: await district(), mode: keyMode, sha256, sheet: opts.sheet });

		const progress = fileProgress(ui, label, size);
		let answer;
		try {
			answer = await client.json<BatchView>({
				method: 'POST',
				path: '/api/v1/batches',
				query: { mode: opts.mode, type: opts.type === 'events' ? 'events' : undefined, district: opts.district, sheet: opts.sheet },
				headers: {
					'content-type': CONTENT_TYPES[format],
					'idempotency-key': key,
					'content-disposition': contentDisposition(label)
				},
				body: { open: () => createReadStream(file), length: size, onProgress: (n) => progress.sent(n) },
				retryInFlight: true
			});
		} catch (e) {
			progress.done(null);
			throw e;
		}
		const replayed = answer.response.headers['idempotent-replayed'] === 'true';
		let batch = answer.data;
		progress.done(
			replayed
				? `${label}: already sent with the same Idempotency-Key as batch ${batch.id}; nothing sent twice`
				: `${label}: sent ${formatBytes(size)} as batch ${batch.id} (mode ${batch.mode})`
		);
		if (opts.wait) {
			const p = fileProgress(ui, `${label} (batch ${batch.id})`, 1);
			try {
				batch = await waitForBatch(client, batch, { timeoutSeconds: opts.waitTimeout, onRows: (n) => p.rows(n) });
			} finally {
				p.done(null);
			}
		}
		const result: FileResult = { file: label, idempotency_key: key, replayed, batch, exit: opts.wait ? batchExitCode(batch) : EXIT.ok };
		if (opts.wait && isFinished(batch)) {
			const { findings, notShown } = await batchFindings(client, batch, opts.maxFindings);
			result.findings = findings;
			result.findings_not_shown = notShown;
		}
		return result;
	} finally {
		spooled?.discard();
	}
}

async function printResult(ctx: Context, r: FileResult): Promise<void> {
	const ui = ctx.ui;
	// --quiet: a night where everything went in prints nothing at all (warnings stay on the hub's report).
	if (ui.quiet && r.exit === EXIT.ok) return;
	await ui.line(summarizeBatch(r.batch, r.file));
	for (const f of r.findings ?? []) await ui.line(formatFinding(r.file, f, ui));
	if (r.findings_not_shown)
		await ui.line(`${r.file}: … and ${r.findings_not_shown} more findings: runnel batches ${r.batch.id} --findings`);
	if (!r.findings && !isFinished(r.batch) && !ui.quiet) ui.info(`follow it with: runnel batches ${r.batch.id}   (or upload with --wait)`);
}

async function upload(ctx: Context, files: string[], opts: UploadOptions): Promise<number> {
	if (opts.dryRun) opts.mode = 'check';
	if (opts.idempotencyKey !== undefined) {
		if (!isValidIdempotencyKey(opts.idempotencyKey))
			throw new UsageError('--idempotency-key must be 1–255 visible ASCII characters, without spaces.');
		if (files.length > 1)
			throw new UsageError('--idempotency-key names one upload; give one file per run when you set it (each file needs its own key).');
	}
	if (files.filter((f) => f === '-').length > 1) throw new UsageError('stdin (-) can be read only once.');
	for (const f of files) resolveFormat(f, opts.format);
	const client = ctx.client();
	let ref: Promise<string> | null = null;
	const district = () => (ref ??= districtRef(client, opts));

	const codes: number[] = [];
	const results: FileResult[] = [];
	for (const file of files) {
		try {
			const r = await uploadOne(ctx, client, file, opts, district);
			codes.push(r.exit);
			if (ctx.opts.json) results.push(r);
			else await printResult(ctx, r);
		} catch (e) {
			if (!(e instanceof CliError)) throw e;
			// Credentials or usage problems are the same for every file: stop here.
			if (e.exitCode === EXIT.auth || e.exitCode === EXIT.usage) throw e;
			const what = e instanceof HttpError ? e.message : e.message;
			ctx.ui.error(`${displayName(file)}: ${what}`, e.details);
			codes.push(e.exitCode);
			if (ctx.opts.json) results.push({ file: displayName(file), error: what, exit: e.exitCode } as unknown as FileResult);
		}
	}
	if (ctx.opts.json) await ctx.ui.printJson(results.map(({ exit, ...rest }) => ({ ...rest, exit_code: exit })));
	return worstExit(codes);
}

export function registerUpload(program: Command, r: Registry): Command {
	return program
		.command('upload')
		.description('send files of practice records (or, with --type events, upkeep events) to the hub as batches (CSV, XLSX, NDJSON or JSON)')
		.argument('<file...>', 'files to send; - reads stdin (then pass --format)')
		.addOption(
			new Option('--mode <mode>', 'all: all or nothing; valid: save the valid rows; check: dry run')
				.choices(['all', 'valid', 'check'])
				.default('all')
		)
		.addOption(
			new Option('--type <type>', 'records: practice records; events: upkeep events (schema practice-event)')
				.choices(['records', 'events'])
				.default('records')
		)
		.option('--dry-run', 'same as --mode check: the hub checks the file and saves nothing')
		.option('--wait', 'follow each batch until it is checked, print its findings, and exit 2 if rows were rejected')
		.option('--idempotency-key <key>', 'use this key instead of the one derived from the district and the file (one file only)')
		.option('--district <code>', 'the district the file is for (needed for state-wide tokens)')
		.option('--sheet <name>', 'the XLSX sheet to read (default: the first)')
		.addOption(new Option('--format <format>', 'the file format when the name does not tell it').choices([...FILE_FORMATS]))
		.addOption(
			new Option('--wait-timeout <seconds>', 'give up waiting after this long').argParser(positiveNumber('--wait-timeout')).default(3600)
		)
		.addOption(
			new Option('--max-findings <n>', 'print at most this many findings per file')
				.argParser(wholeNumber('--max-findings', 0, 1_000_000))
				.default(1000)
		)
		.addHelpText(
			'after',
			`
Each file is hashed (SHA-256) first; unless --idempotency-key is given, the key is
runnel-cli.v1.<district>.<mode>.<sha256>, so running the same upload again (after a
crash, a cut connection or a retry) never makes a second batch: the hub answers with
the batch it already has. Network errors, 5xx and 429 are retried with backoff,
re-sending the file with the same key.

Progress goes to stderr (a bar on a terminal, one line per file otherwise); the
batch summary and findings go to stdout (--json for a JSON array).

Exit codes: 0 sent (and, with --wait, nothing rejected); 2 rows rejected or errors
found (--wait); 1 network or server error; 3 usage; 4 token refused.

Examples:
  $ runnel upload --wait practices.csv
  $ runnel upload --mode valid --wait --quiet nightly/*.csv
  $ runnel upload --dry-run --wait practices.xlsx --sheet "2026"
  $ export-practices | runnel upload --format ndjson --wait -
  $ runnel upload --district BLH --wait blh.csv        (a state-wide token)
  $ runnel upload --type events --wait upkeep.csv      (upkeep events)`
		)
		.action(r.action((ctx, files, opts) => upload(ctx, files as string[], opts as UploadOptions)));
}
