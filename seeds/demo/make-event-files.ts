// Writes the demo upkeep-event files committed beside this script (run again only when they must change):
//   events.csv           — the Bluestem Hills (BLH) upkeep events the demo seed loads (from events.ts);
//                          sending it again answers every row `unchanged`;
//   events-clean.csv     — 12 new valid BLH events dated after the demo's last install date;
//   events-mistakes.csv  — 15 rows with deliberate mistakes, documented in events-mistakes.json.
// Usage: npx tsx seeds/demo/make-event-files.ts
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { eventsToCsv, finalDemoRecords, generateDemoEvents } from './events';
import type { Mistake } from './make-files';
import { generateDemoRecords, type DemoRow } from './records';

const DIR = import.meta.dirname;

function main() {
	const records = generateDemoRecords();
	const blhEvents = generateDemoEvents(undefined, records).find((d) => d.district === 'BLH')!;
	writeFileSync(path.join(DIR, 'events.csv'), eventsToCsv(blhEvents.rows));

	// BLH practices as they stand at the hub after the seed (installed ones only).
	const blh = finalDemoRecords(records.find((d) => d.district === 'BLH')!).filter((r) => r.status !== 'withdrawn' && !r.withdrawn_on);
	const of = (code: string, n = 0) => String(blh.filter((r) => r.practice_code === code)[n].local_id);
	const empty: DemoRow = { stop_board_height_in: null, structure_id: null, media_added_cu_yd: null, notes: null };
	const ev = (local_id: string, event_on: string, kind: string, extra: DemoRow = {}): DemoRow => ({ local_id, event_on, kind, ...empty, ...extra });

	// The clean upload: events after the seeded ones (the seed's last date is 2026-11-15), one bioreactor's whole season.
	const bio = of('605', 0);
	const dwm = of('554', 0);
	const clean: DemoRow[] = [
		ev(bio, '2026-11-16', 'inspection', { notes: 'Autumn check: outlet clear, chips settled about 4 inches.' }),
		ev(bio, '2026-11-18', 'media_top_up', { media_added_cu_yd: 35, notes: 'Chips from the county yard.' }),
		ev(bio, '2026-11-19', 'structure_setting', { stop_board_height_in: 30, structure_id: 'inlet', notes: 'Raised for the winter.' }),
		ev(bio, '2026-11-24', 'repair', { notes: 'Rodent guard on the outlet refitted.' }),
		ev(dwm, '2026-11-17', 'structure_setting', { stop_board_height_in: 36, structure_id: 'CS-1', notes: 'Raised after harvest.' }),
		ev(dwm, '2026-11-17', 'inspection', { notes: 'Boards seated, no leaks.' }),
		ev(of('393', 0), '2026-11-20', 'mowing'),
		ev(of('412', 0), '2026-11-20', 'mowing', { notes: 'Last cut of the year.' }),
		ev(of('587', 0), '2026-11-21', 'structure_setting', { stop_board_height_in: 24.5, structure_id: 'north' }),
		ev(of('604', 0), '2026-11-21', 'structure_setting', { stop_board_height_in: 18 }),
		ev(of('656', 0), '2026-11-23', 'inspection', { notes: 'Berm intact.' }),
		ev(of('638', 0), '2026-11-25', 'repair', { notes: 'Washout at the outlet filled and seeded.' })
	];
	writeFileSync(path.join(DIR, 'events-clean.csv'), eventsToCsv(clean));

	// The mistakes file: a good row first, then one mistake per row (row numbers count the header as 1).
	const cover = of('340', 0);
	const coverRec = blh.find((r) => r.local_id === cover)!;
	const rows: DemoRow[] = [];
	const mistakes: Mistake[] = [];
	const add = (r: DemoRow, m?: Omit<Mistake, 'row'>) => {
		rows.push(r);
		if (m) mistakes.push({ row: rows.length + 1, ...m });
	};
	const good = ev(bio, '2026-11-20', 'inspection', { notes: 'Looks fine.' });
	add(good);
	add(ev('BLH-NO-SUCH-PRACTICE', '2026-11-20', 'inspection'), {
		column: 'local_id',
		code: 'practice-unknown',
		severity: 'error',
		what: 'a local id that is not one of the district’s practice records'
	});
	add(ev(bio, '2026-02-30', 'inspection'), { column: 'event_on', code: 'bad-date', severity: 'error', what: 'a date that does not exist (30 February)' });
	add(ev(bio, '2031-05-01', 'inspection'), { column: 'event_on', code: 'date-in-future', severity: 'error', what: 'an event date in the future' });
	add(ev(bio, '2026-11-21', 'weeding'), { column: 'kind', code: 'not-in-list', severity: 'error', what: 'a kind that is not in the list' });
	add(ev(dwm, '2026-11-21', 'structure_setting'), {
		column: 'stop_board_height_in',
		code: 'required-for-kind',
		severity: 'error',
		what: 'a structure setting change without the stop-board height'
	});
	add(ev(dwm, '2026-11-22', 'structure_setting', { stop_board_height_in: '3 ft' }), {
		column: 'stop_board_height_in',
		code: 'number-format',
		severity: 'error',
		what: 'a height written with its unit ("3 ft") instead of a number of inches'
	});
	add(ev(bio, '2026-11-22', 'media_top_up', { media_added_cu_yd: -5 }), {
		column: 'media_added_cu_yd',
		code: 'below-minimum',
		severity: 'error',
		what: 'a negative volume of media added'
	});
	add(ev(cover, '1999-04-01', 'inspection'), {
		column: 'event_on',
		code: 'before-installed',
		severity: 'error',
		what: `an event before the practice was installed (${String(coverRec.installed_on)})`
	});
	add({ ...good, notes: 'Sent twice.' }, { column: 'kind', code: 'duplicate-event', severity: 'error', what: 'the same practice, date and kind as row 2' });
	add(ev('', '2026-11-20', 'mowing'), { column: 'local_id', code: 'required-missing', severity: 'error', what: 'no local id' });
	add(ev(bio, '11/20/2026', 'repair'), { column: 'event_on', code: 'bad-date', severity: 'error', what: 'a US-style date instead of YYYY-MM-DD' });
	add(ev(cover, '2026-11-20', 'media_top_up', { media_added_cu_yd: 10 }), {
		column: 'kind',
		code: 'kind-unusual-for-practice',
		severity: 'warning',
		what: 'a media top-up of a cover crop (accepted, flagged for review)'
	});
	add(ev(bio, '2026-11-23', 'inspection', { media_added_cu_yd: 12 }), {
		column: 'media_added_cu_yd',
		code: 'not-applicable',
		severity: 'warning',
		what: 'a media volume on an inspection (kept, flagged)'
	});
	writeFileSync(path.join(DIR, 'events-mistakes.csv'), eventsToCsv(rows));
	writeFileSync(
		path.join(DIR, 'events-mistakes.json'),
		JSON.stringify({ file: 'events-mistakes.csv', district: 'BLH', mistakes }, null, '\t') + '\n'
	);
	console.error(`wrote events.csv (${blhEvents.rows.length}), events-clean.csv (${clean.length}), events-mistakes.csv (${rows.length} rows, ${mistakes.length} mistakes)`);
}

main();
