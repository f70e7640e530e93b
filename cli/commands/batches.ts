// `runnel batches [ID] [--findings]`: the batches you may see, one batch, or its findings.
import { Option, type Command } from 'commander';
import { batchExitCode, summarizeBatch, type BatchView } from '../batch-view';
import type { Context } from '../context';
import { EXIT } from '../exit-codes';
import { formatFinding } from '../findings-format';
import { table } from '../output';
import type { Registry } from '../program';
import { wholeNumber } from '../program';
import type { Finding } from '../../src/lib/schema/findings';
import { UsageError } from '../exit-codes';

interface BatchesOptions {
	findings?: boolean;
	severity?: 'error' | 'warning';
	district?: string;
	status?: string;
	mode?: string;
	limit: number;
}

async function listBatches(ctx: Context, opts: BatchesOptions): Promise<number> {
	const client = ctx.client();
	const query = { district: opts.district, status: opts.status, mode: opts.mode, limit: Math.min(200, opts.limit) };
	const rows: BatchView[] = [];
	for await (const b of client.pages<BatchView>('/api/v1/batches', query, opts.limit)) rows.push(b);
	if (ctx.opts.json) {
		await ctx.ui.printJson(rows);
		return EXIT.ok;
	}
	if (rows.length === 0) {
		ctx.ui.info('No batches.');
		return EXIT.ok;
	}
	await ctx.ui.out(
		table(
			['ID', 'DISTRICT', 'MODE', 'STATUS', 'ROWS', 'ACCEPTED', 'REJECTED', 'WARNINGS', 'CREATED', 'FILE'],
			rows.map((b) => [
				b.id,
				b.district.code,
				b.mode,
				b.status,
				b.counts.rows,
				b.counts.accepted,
				b.counts.rejected,
				b.counts.warnings,
				b.created_at.slice(0, 16).replace('T', ' '),
				b.file_name ?? ''
			])
		)
	);
	return EXIT.ok;
}

async function showBatch(ctx: Context, id: string, opts: BatchesOptions): Promise<number> {
	if (!/^\d+$/.test(id)) throw new UsageError(`A batch id is a number (got ${JSON.stringify(id)}).`);
	const client = ctx.client();
	const batch = await client.getJson<BatchView>(`/api/v1/batches/${id}`);
	const label = batch.file_name ?? `batch-${batch.id}`;
	if (!opts.findings) {
		if (ctx.opts.json) await ctx.ui.printJson(batch);
		else await ctx.ui.line(summarizeBatch(batch, label));
		return batchExitCode(batch);
	}
	// Findings are streamed page by page: JSON as one array written as it arrives.
	const query = { severity: opts.severity, limit: 1000 };
	if (ctx.opts.json) {
		await ctx.ui.out('[');
		let first = true;
		for await (const f of client.pages<Finding>(`/api/v1/batches/${id}/findings`, query)) {
			await ctx.ui.out((first ? '\n' : ',\n') + JSON.stringify(f));
			first = false;
		}
		await ctx.ui.out(first ? ']\n' : '\n]\n');
	} else {
		for await (const f of client.pages<Finding>(`/api/v1/batches/${id}/findings`, query))
			await ctx.ui.line(formatFinding(label, f, ctx.ui));
		if (batch.findings_omitted > 0) ctx.ui.warn(`the hub counted ${batch.findings_omitted} more findings than it kept for this batch.`);
	}
	return batchExitCode(batch);
}

export function registerBatches(program: Command, r: Registry): Command {
	return program
		.command('batches')
		.description('list your batches, or show one batch and its findings')
		.argument('[id]', 'a batch id')
		.option('--findings', "print the batch's findings (file:row:column: severity code: message)")
		.addOption(new Option('--severity <severity>', 'only findings of this severity').choices(['error', 'warning']))
		.option('--district <code>', 'only batches of this district (state-wide tokens)')
		.addOption(new Option('--status <status>', 'only batches in this status').choices(['received', 'checking', 'done', 'failed']))
		.addOption(new Option('--mode <mode>', 'only batches of this mode').choices(['check', 'all', 'valid']))
		.addOption(new Option('--limit <n>', 'list at most this many batches').argParser(wholeNumber('--limit', 1, 100_000)).default(20))
		.addHelpText(
			'after',
			`
With an id, the exit code tells the batch's outcome: 0 fine or still running,
2 rows rejected or errors found, 1 the batch failed.

Examples:
  $ runnel batches
  $ runnel batches --status failed --limit 50 --json
  $ runnel batches 17
  $ runnel batches 17 --findings --severity error`
		)
		.action(
			r.action((ctx, id, opts) => (id ? showBatch(ctx, id as string, opts as BatchesOptions) : listBatches(ctx, opts as BatchesOptions)))
		);
}
