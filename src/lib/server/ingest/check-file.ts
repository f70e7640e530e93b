// The whole offline check of one file: read it (read-rows.ts), check every row (check-records.ts),
// and count. Used by the CLI's `runnel check` and available to the batch pipeline, so both report the
// very same findings for the same file.
import { createHash } from 'node:crypto';
import type { Finding } from '../../schema/findings';
import { createFindingTally, createRecordChecker, type CheckContext, type FindingSummary } from '../../schema/check-records';
import type { PracticeRecordV1 } from '../../schema/practice-record';
import { SCHEMA_VERSION } from '../../schema/practice-record';
import { createEventChecker, type EventCheckContext } from '../../schema/check-events';
import { EVENT_SCHEMA_VERSION, type PracticeEventV1 } from '../../schema/practice-event';
import type { TextEncodingName } from './decode';
import { readRows, type ReadOptions, type RowFormat } from './read-rows';

export type CheckEvent =
	| { kind: 'source'; encoding: TextEncodingName; sheet: string | null }
	| { kind: 'header'; columns: string[] }
	/** A file-level finding (row null). An error means the file cannot be used as a whole. */
	| { kind: 'file-finding'; finding: Finding }
	/** One data row: its record, or null when rejected; reader and checker findings together. */
	| { kind: 'row'; row: number; record: PracticeRecordV1 | null; findings: Finding[] }
	| { kind: 'end'; stats: CheckStats };

export interface CheckStats {
	schema_version: string;
	format: RowFormat;
	encoding: TextEncodingName | null;
	sheet: string | null;
	columns: string[] | null;
	bytes: number;
	sha256: string;
	/** Data rows seen (including rows that could not be read). */
	rows: number;
	accepted: number;
	rejected: number;
	/** Rows accepted with at least one warning. */
	accepted_with_warnings: number;
	/** File-level errors: when > 0 the file cannot be used as a whole. */
	file_errors: number;
	/** True when there is no file-level error and no rejected row. */
	valid: boolean;
	findings: FindingSummary;
}

export async function* checkFile(
	input: NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
	format: RowFormat,
	ctx: CheckContext,
	opts: ReadOptions = {}
): AsyncGenerator<CheckEvent> {
	yield* checkRowsWith(input, format, createRecordChecker(ctx), SCHEMA_VERSION, opts);
}

/** The same check of an upkeep-events file (schema practice-event), with the event checker. */
export function checkEventFile(
	input: NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
	format: RowFormat,
	ctx: EventCheckContext,
	opts: ReadOptions = {}
): AsyncGenerator<CheckEventOf<PracticeEventV1>> {
	return checkRowsWith(input, format, createEventChecker(ctx), EVENT_SCHEMA_VERSION, opts);
}

/** Any row checker: a header check and a row check giving the normalised row (or null) and findings. */
interface RowChecker<R> {
	header(columns: string[], headerRow?: number): Finding[];
	row(values: Record<string, unknown>, row: number): { record: R | null; findings: Finding[] };
}

export type CheckEventOf<R> = Exclude<CheckEvent, { kind: 'row' }> | { kind: 'row'; row: number; record: R | null; findings: Finding[] };

async function* checkRowsWith<R>(
	input: NodeJS.ReadableStream | AsyncIterable<Uint8Array>,
	format: RowFormat,
	checker: RowChecker<R>,
	schemaVersion: string,
	opts: ReadOptions
): AsyncGenerator<CheckEventOf<R>> {
	const hash = createHash('sha256');
	let bytes = 0;
	async function* counted() {
		for await (const c of input as AsyncIterable<Uint8Array | string>) {
			const b = typeof c === 'string' ? Buffer.from(c) : c;
			hash.update(b);
			bytes += b.length;
			yield b;
		}
	}
	const tally = createFindingTally();
	const stats: Omit<CheckStats, 'sha256' | 'bytes' | 'valid' | 'findings'> = {
		schema_version: schemaVersion,
		format,
		encoding: null,
		sheet: null,
		columns: null,
		rows: 0,
		accepted: 0,
		rejected: 0,
		accepted_with_warnings: 0,
		file_errors: 0
	};
	const fileFinding = (f: Finding): CheckEventOf<R> => {
		tally.add(f);
		if (f.severity === 'error') stats.file_errors++;
		return { kind: 'file-finding', finding: f };
	};

	for await (const e of readRows(counted(), format, opts)) {
		switch (e.kind) {
			case 'source':
				stats.encoding = e.encoding;
				stats.sheet = e.sheet;
				yield e;
				break;
			case 'header': {
				stats.columns = e.columns;
				yield { kind: 'header', columns: e.columns };
				for (const f of checker.header(e.columns, e.row ?? 1)) yield fileFinding(f);
				break;
			}
			case 'finding':
				if (e.finding.row === null) yield fileFinding(e.finding);
				else {
					stats.rows++;
					stats.rejected++;
					tally.add(e.finding);
					yield { kind: 'row', row: e.finding.row, record: null, findings: [e.finding] };
				}
				break;
			case 'row': {
				stats.rows++;
				const checked = checker.row(e.values, e.row);
				const findings: Finding[] = [];
				for (const f of [...(e.findings ?? []), ...checked.findings]) {
					if (f.row === null) yield fileFinding(f);
					else {
						findings.push(f);
						tally.add(f);
					}
				}
				const record = findings.some((f) => f.severity === 'error') ? null : checked.record;
				if (record) {
					stats.accepted++;
					if (findings.length > 0) stats.accepted_with_warnings++;
				} else stats.rejected++;
				yield { kind: 'row', row: e.row, record, findings };
				break;
			}
		}
	}
	yield {
		kind: 'end',
		stats: {
			...stats,
			bytes,
			sha256: hash.digest('hex'),
			valid: stats.file_errors === 0 && stats.rejected === 0,
			findings: tally.summary()
		}
	};
}
