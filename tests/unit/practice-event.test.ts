// The practice event schema and its checker: the published JSON Schema, the kind-specific rules, the
// practice rules (known local id, not before install) and the exact row/column/cell of each finding.
import { Readable } from 'node:stream';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { createEventChecker, type EventCheckContext } from '../../src/lib/schema/check-events';
import { practiceEventJsonSchema, PRACTICE_EVENT_SCHEMA_ID } from '../../src/lib/schema/event-json-schema';
import { eventDataDictionary } from '../../src/lib/schema/event-dictionary';
import { EVENT_KIND_VALUES, eventCsvTemplate, PRACTICE_EVENT_COLUMNS, PracticeEventV1Schema } from '../../src/lib/schema/practice-event';
import { checkEventFile } from '../../src/lib/server/ingest/check-file';
import { finalDemoRecords } from '../../seeds/demo/events';
import { generateDemoRecords } from '../../seeds/demo/records';
import type { Finding } from '../../src/lib/schema/findings';

const ctx: EventCheckContext = {
	today: '2026-06-01',
	practices: new Map([
		['BIO-1', { practice_code: '605', installed_on: '2020-05-01', withdrawn_on: null }],
		['DWM-1', { practice_code: '554', installed_on: '2021-03-10', withdrawn_on: null }],
		['CC-1', { practice_code: '340', installed_on: '2022-10-01', withdrawn_on: '2024-01-01' }]
	])
};
const HEADER = [...PRACTICE_EVENT_COLUMNS];

function check(rows: Array<Record<string, unknown>>, c: EventCheckContext = ctx) {
	const checker = createEventChecker(c);
	const header = checker.header(HEADER);
	return { header, rows: rows.map((r, i) => checker.row(r, i + 2)) };
}
const codes = (fs: Finding[]) => fs.map((f) => `${f.severity}:${f.code}:${f.column}`);

describe('practice event schema', () => {
	it('publishes a JSON Schema 2020-12 with $id, version, the kind list and the per-kind rule', () => {
		const s = practiceEventJsonSchema() as {
			$schema: string;
			$id: string;
			version: string;
			required: string[];
			properties: Record<string, { enum?: string[]; format?: string }>;
			allOf: unknown[];
		};
		expect(s.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
		expect(s.$id).toBe(PRACTICE_EVENT_SCHEMA_ID);
		expect(s.version).toBe('1');
		expect(s.required).toEqual(['local_id', 'event_on', 'kind']);
		expect(s.properties.kind.enum).toEqual(['media_top_up', 'structure_setting', 'mowing', 'repair', 'inspection']);
		expect(s.properties.event_on.format).toBe('date');
		expect(s.allOf).toContainEqual({
			if: { properties: { kind: { enum: ['structure_setting'] } }, required: ['kind'] },
			then: { required: ['stop_board_height_in'], properties: { stop_board_height_in: { type: 'number' } } }
		});
	});

	it('has a CSV template and dictionary with exactly the schema columns', () => {
		expect(eventCsvTemplate()).toBe(`${PRACTICE_EVENT_COLUMNS.join(',')}\r\n`);
		const dict = eventDataDictionary().flatMap((g) => g.columns.map((c) => c.name));
		expect(dict.sort()).toEqual([...PRACTICE_EVENT_COLUMNS].sort());
		const stop = eventDataDictionary()
			.flatMap((g) => g.columns)
			.find((c) => c.name === 'stop_board_height_in')!;
		expect(stop.required).toBe('Required for structure_setting');
		expect(stop.unit).toBe('inches');
	});

	it('rejects an impossible date and an unknown kind in the zod schema itself', () => {
		const ok = {
			local_id: 'A',
			event_on: '2024-02-29',
			kind: 'mowing',
			stop_board_height_in: null,
			structure_id: null,
			media_added_cu_yd: null,
			notes: null
		};
		expect(PracticeEventV1Schema.safeParse(ok).success).toBe(true);
		expect(PracticeEventV1Schema.safeParse({ ...ok, event_on: '2023-02-29' }).success).toBe(false);
		expect(PracticeEventV1Schema.safeParse({ ...ok, kind: 'weeding' }).success).toBe(false);
		expect(EVENT_KIND_VALUES).toHaveLength(5);
	});
});

describe('event checker', () => {
	it('accepts a clean event and normalises it (kind case, numbers)', () => {
		const { header, rows } = check([
			{ local_id: 'DWM-1', event_on: '2025-10-20', kind: 'Structure Setting', stop_board_height_in: '36.5', structure_id: 'CS-1' }
		]);
		expect(header).toEqual([]);
		expect(rows[0].findings).toEqual([]);
		expect(rows[0].record).toEqual({
			local_id: 'DWM-1',
			event_on: '2025-10-20',
			kind: 'structure_setting',
			stop_board_height_in: 36.5,
			structure_id: 'CS-1',
			media_added_cu_yd: null,
			notes: null
		});
	});

	it('requires the stop-board height for a structure setting change, with row, column and cell', () => {
		const { rows } = check([{ local_id: 'DWM-1', event_on: '2025-10-20', kind: 'structure_setting' }]);
		expect(rows[0].record).toBeNull();
		expect(rows[0].findings).toHaveLength(1);
		expect(rows[0].findings[0]).toMatchObject({
			code: 'required-for-kind',
			severity: 'error',
			row: 2,
			column: 'stop_board_height_in',
			column_number: 4,
			cell: 'D2'
		});
	});

	it('rejects an unknown practice, a date before install and a future date', () => {
		const { rows } = check([
			{ local_id: 'NOPE', event_on: '2025-01-01', kind: 'inspection' },
			{ local_id: 'BIO-1', event_on: '2020-04-30', kind: 'inspection' },
			{ local_id: 'BIO-1', event_on: '2026-06-02', kind: 'inspection' },
			{ local_id: 'BIO-1', event_on: '2020-05-01', kind: 'inspection' }
		]);
		expect(codes(rows[0].findings)).toEqual(['error:practice-unknown:local_id']);
		expect(codes(rows[1].findings)).toEqual(['error:before-installed:event_on']);
		expect(codes(rows[2].findings)).toEqual(['error:date-in-future:event_on']);
		// The install day itself is allowed.
		expect(rows[3].findings).toEqual([]);
	});

	it('skips the practice rules offline (no practice list) but keeps every other rule', () => {
		const { rows } = check(
			[
				{ local_id: 'NOPE', event_on: '2025-01-01', kind: 'inspection' },
				{ local_id: 'NOPE', event_on: '2025-01-01', kind: 'inspection' }
			],
			{ today: '2026-06-01', practices: null }
		);
		expect(rows[0].findings).toEqual([]);
		expect(codes(rows[1].findings)).toEqual(['error:duplicate-event:kind']);
		expect(rows[1].findings[0].rule).toMatchObject({ first_row: 2 });
	});

	it('flags (but accepts) an unusual kind for the practice, details of another kind, and events after withdrawal', () => {
		const { rows } = check([
			{ local_id: 'DWM-1', event_on: '2025-06-01', kind: 'media_top_up', media_added_cu_yd: 10 },
			{ local_id: 'BIO-1', event_on: '2025-06-01', kind: 'inspection', media_added_cu_yd: 10 },
			{ local_id: 'CC-1', event_on: '2025-06-01', kind: 'inspection' }
		]);
		expect(codes(rows[0].findings)).toEqual(['warning:kind-unusual-for-practice:kind']);
		expect(codes(rows[1].findings)).toEqual(['warning:not-applicable:media_added_cu_yd']);
		expect(codes(rows[2].findings)).toEqual(['warning:after-withdrawn:event_on']);
		expect(rows.every((r) => r.record !== null)).toBe(true);
	});

	it('reports a missing required column once, at file level', () => {
		const checker = createEventChecker(ctx);
		const header = checker.header(['local_id', 'kind', 'extra']);
		expect(codes(header)).toEqual(['warning:unknown-column:extra', 'error:missing-column:event_on']);
		const row = checker.row({ local_id: 'BIO-1', kind: 'inspection', extra: 'x' }, 2);
		expect(row.record).toBeNull();
		expect(row.findings).toEqual([]);
	});

	it('finds every documented mistake of the demo events file at its row and column', async () => {
		const demo = path.join(import.meta.dirname, '../../seeds/demo');
		const doc = JSON.parse(readFileSync(path.join(demo, 'events-mistakes.json'), 'utf8')) as {
			mistakes: Array<{ row: number; column: string; code: string; severity: string }>;
		};
		const blh = finalDemoRecords(generateDemoRecords().find((d) => d.district === 'BLH')!);
		const practices = new Map(
			blh.map((r) => [
				String(r.local_id),
				{
					practice_code: String(r.practice_code),
					installed_on: String(r.installed_on),
					withdrawn_on: (r.withdrawn_on as string | null) ?? null
				}
			])
		);
		const findings: Finding[] = [];
		let rows = 0;
		for await (const e of checkEventFile(Readable.from([readFileSync(path.join(demo, 'events-mistakes.csv'))]), 'csv', {
			today: '2026-12-01',
			practices
		})) {
			if (e.kind === 'row') findings.push(...e.findings);
			if (e.kind === 'file-finding') findings.push(e.finding);
			if (e.kind === 'end') rows = e.stats.rows;
		}
		expect(rows).toBe(doc.mistakes.length + 1);
		const got = findings.map((f) => ({ row: f.row, column: f.column, code: f.code, severity: f.severity }));
		expect(got).toEqual(doc.mistakes.map(({ row, column, code, severity }) => ({ row, column, code, severity })));
	});
});
