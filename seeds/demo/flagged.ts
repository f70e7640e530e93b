// A few demo records per district that pass the checks with warnings, so the review queue has something to
// show: an implausible acreage (a decimal point lost), a spreadsheet formula in the notes, and a cover-crop
// species on a bioreactor. Each is a copy of one of the district's own demo records under a new local id,
// so its county, field and operation are the district's. Invented data, like the rest of the demo.
import type { DemoDistrictRecords, DemoRow } from './records';

export function flaggedDemoRows(d: DemoDistrictRecords): DemoRow[] {
	const cover = d.initial.filter((r) => r.practice_code === '340');
	const bioreactor = d.initial.find((r) => r.practice_code === '605');
	const out: DemoRow[] = [];
	if (cover[0]) {
		const acres = Number(cover[0].extent_acres ?? 60);
		out.push({ ...cover[0], local_id: `${d.district}-FLAG-001`, extent_acres: Math.max(5200, Math.round(acres * 100)), notes: 'Acres from the enrolment sheet.' });
	}
	if (cover[1])
		out.push({ ...cover[1], local_id: `${d.district}-FLAG-002`, notes: '=B12*0.9 (acres net of waterways, from the plan sheet)' });
	if (bioreactor) out.push({ ...bioreactor, local_id: `${d.district}-FLAG-003`, cover_species: 'cereal rye' });
	return out;
}
