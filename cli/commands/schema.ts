// `runnel schema`: the published record schema (JSON Schema) or an empty template to fill in.
import { Option, type Command } from 'commander';
import type { Context } from '../context';
import { EXIT } from '../exit-codes';
import { openSink } from '../sink';
import type { Registry } from '../program';

export const SCHEMA_DOCUMENTS = {
	'json-schema': { path: '/api/v1/schema/practice-record.json', accept: 'application/schema+json, application/json', binary: false },
	'csv-template': { path: '/api/v1/schema/practice-record.csv', accept: 'text/csv', binary: false },
	'xlsx-template': {
		path: '/api/v1/schema/practice-record.xlsx',
		accept: 'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet',
		binary: true
	}
} as const;

type SchemaFormat = keyof typeof SCHEMA_DOCUMENTS;

async function schema(ctx: Context, opts: { format: SchemaFormat; output?: string; type?: 'records' | 'events' }): Promise<number> {
	const base = SCHEMA_DOCUMENTS[opts.format];
	// The upkeep-events schema sits beside the record schema under the same names.
	const doc = opts.type === 'events' ? { ...base, path: base.path.replace('practice-record', 'practice-event') } : base;
	const sink = openSink(ctx.io, opts.output, { binary: doc.binary });
	try {
		// The schema is public: no token needed (one is sent when known).
		const res = await ctx.client({ needToken: false }).request({ path: doc.path, headers: { accept: doc.accept } });
		await sink.pour(res.body);
		await sink.commit();
	} catch (e) {
		sink.abort();
		throw e;
	}
	if (!sink.toStdout) ctx.ui.info(`${opts.format} written to ${sink.label}`);
	return EXIT.ok;
}

export function registerSchema(program: Command, r: Registry): Command {
	return program
		.command('schema')
		.description('download the record schema (JSON Schema 2020-12) or a CSV/XLSX template')
		.addOption(new Option('--format <format>', 'what to download').choices(Object.keys(SCHEMA_DOCUMENTS)).default('json-schema'))
		.addOption(
			new Option('--type <type>', 'records: the practice record schema; events: the upkeep event schema')
				.choices(['records', 'events'])
				.default('records')
		)
		.addOption(new Option('-o, --output <file>', 'write to this file (- for stdout, the default)'))
		.addHelpText(
			'after',
			`
Examples:
  $ runnel schema > practice-record.schema.json
  $ runnel schema --format csv-template -o practices.csv
  $ runnel schema --format xlsx-template -o practices.xlsx
  $ runnel schema --type events --format csv-template -o upkeep.csv`
		)
		.action(r.action((ctx, opts) => schema(ctx, opts as { format: SchemaFormat; output?: string; type?: 'records' | 'events' })));
}
