// The demo scenario's upkeep events (practice events): a deterministic generator over the demo records
// (same seed → same rows). Everything is invented for the demo: dates, heights, volumes and notes.
// - Bioreactors (605): most get an inspection every spring and a woodchip top-up every few years; a few
//   are "neglected" — their upkeep stops a couple of years after install — so the dashboard shows some
//   bioreactors with upkeep overdue.
// - Drainage water management (554), structures for water control (587) and saturated buffers (604): the
//   stop boards are raised after harvest and lowered before planting (the last three years).
// - Vegetated covers (327, 386, 390, 393, 412): mowed most summers (the last four years).
// - Anything else: an occasional inspection or repair.
import { stringify } from 'csv-stringify/sync';
import { PRACTICE_EVENT_COLUMNS } from '../../src/lib/schema/practice-event';
import { DEMO_CUTOFF, generateDemoRecords, prng, type DemoDistrictRecords, type DemoRow } from './records';

const pad = (n: number) => String(n).padStart(2, '0');
const dayIn = (r: () => number, year: number, month: number, span = 1) => {
	const m = month + Math.floor(r() * span);
	return `${year}-${pad(m)}-${pad(1 + Math.floor(r() * 28))}`;
};

const INSPECTION_NOTES = [
	'Outlet clear, water flowing through the bed.',
	'Chips settled about 6 inches; top-up planned.',
	'Inlet structure checked; no bypass flow seen.',
	'Cover soil intact, grass established.',
	'Small washout at the outlet; repair planned.'
];
const REPAIR_NOTES = ['Outlet pipe replaced.', 'Washout at the outlet filled and seeded.', 'Stop-board seals replaced.', 'Rodent guard refitted.'];
const MOWED = new Set(['327', '386', '390', '393', '412']);
const STRUCTURES = new Set(['554', '587', '604']);

/** Each district's records as they stand after the demo's later corrections file (final state). */
export function finalDemoRecords(d: DemoDistrictRecords): DemoRow[] {
	const byId = new Map(d.initial.map((r) => [String(r.local_id), r]));
	for (const u of d.update) byId.set(String(u.local_id), u);
	return [...byId.values()];
}

/** Local ids of the bioreactors the generator leaves without upkeep after their first years. */
export interface DemoDistrictEvents {
	district: string;
	rows: DemoRow[];
	neglected: string[];
}

export function generateDemoEvents(seed = 20263, records: DemoDistrictRecords[] = generateDemoRecords()): DemoDistrictEvents[] {
	return records.map((d, di) => {
		const r = prng(seed + di * 104_729);
		const rows: DemoRow[] = [];
		const neglected: string[] = [];
		const cutoffYear = Number(DEMO_CUTOFF.slice(0, 4));
		for (const rec of finalDemoRecords(d)) {
			const id = String(rec.local_id);
			const installed = String(rec.installed_on);
			const last = rec.withdrawn_on ? String(rec.withdrawn_on) : DEMO_CUTOFF;
			const code = String(rec.practice_code);
			const firstYear = Number(installed.slice(0, 4));
			const seen = new Set<string>();
			const add = (event_on: string, kind: string, extra: DemoRow = {}) => {
				const key = `${event_on}|${kind}`;
				if (event_on <= installed || event_on > last || seen.has(key)) return;
				seen.add(key);
				rows.push({ local_id: id, event_on, kind, stop_board_height_in: null, structure_id: null, media_added_cu_yd: null, notes: null, ...extra });
			};
			if (code === '605') {
				// The first two old-enough bioreactors of each district, and about one in twelve of the rest, are
				// neglected: upkeep for a year or two, then nothing.
				const x = r();
				const isNeglected = !rec.withdrawn_on && firstYear <= cutoffYear - 4 && (neglected.length < 2 || x < 0.08);
				if (isNeglected) neglected.push(id);
				const stopAfter = isNeglected ? firstYear + 1 + Math.floor(r() * 2) : cutoffYear;
				for (let y = firstYear + 1; y <= stopAfter; y++) {
					add(dayIn(r, y, 4, 2), 'inspection', { notes: INSPECTION_NOTES[Math.floor(r() * INSPECTION_NOTES.length)] });
					if ((y - firstYear) % 4 === 0) add(dayIn(r, y, 6, 2), 'media_top_up', { media_added_cu_yd: Math.round(20 + r() * 60) });
				}
				if (!isNeglected) add(dayIn(r, firstYear + 1, 11), 'structure_setting', { stop_board_height_in: 24 + 6 * Math.floor(r() * 4), structure_id: 'inlet' });
			} else if (STRUCTURES.has(code)) {
				for (let y = Math.max(firstYear, cutoffYear - 2); y <= cutoffYear; y++) {
					const high = 30 + 6 * Math.floor(r() * 3);
					add(dayIn(r, y, 4), 'structure_setting', { stop_board_height_in: 6, structure_id: 'CS-1', notes: 'Lowered before planting.' });
					add(dayIn(r, y, 10, 2), 'structure_setting', { stop_board_height_in: high, structure_id: 'CS-1', notes: 'Raised after harvest.' });
				}
				if (code === '604' && r() < 0.5) add(dayIn(r, cutoffYear - 1, 7), 'mowing');
			} else if (MOWED.has(code)) {
				for (let y = Math.max(firstYear + 1, cutoffYear - 3); y <= cutoffYear; y++) if (r() < 0.7) add(dayIn(r, y, 7, 2), 'mowing');
			} else if (r() < 0.15) {
				const y = firstYear + 1 + Math.floor(r() * Math.max(1, cutoffYear - firstYear));
				add(dayIn(r, Math.min(y, cutoffYear), 5, 4), r() < 0.7 ? 'inspection' : 'repair', {
					notes: REPAIR_NOTES[Math.floor(r() * REPAIR_NOTES.length)]
				});
			}
		}
		rows.sort((a, b) => String(a.event_on).localeCompare(String(b.event_on)) || String(a.local_id).localeCompare(String(b.local_id)));
		return { district: d.district, rows, neglected };
	});
}

/** Demo event rows as CSV with the full event header (every column, in the published order). */
export function eventsToCsv(rows: DemoRow[]): string {
	return stringify(
		rows.map((r) => PRACTICE_EVENT_COLUMNS.map((c) => r[c] ?? '')),
		{ header: true, columns: [...PRACTICE_EVENT_COLUMNS] }
	);
}
