// Findings printed like a compiler's diagnostics, so editors and people read them the same way:
//   practices.csv:17:4: error date-not-real: installed_on "2026-02-30" is not a real calendar date.
import type { Finding } from '../src/lib/schema/findings';
import type { Ui } from './output';

export function formatFinding(file: string, f: Pick<Finding, 'row' | 'column_number' | 'severity' | 'code' | 'message'>, ui?: Ui): string {
	let where = file;
	if (f.row !== null) {
		where += `:${f.row}`;
		if (f.column_number !== null) where += `:${f.column_number}`;
	}
	const sev = ui ? ui.paint(f.severity, f.severity === 'error' ? 'red' : 'yellow') : f.severity;
	return `${where}: ${sev} ${f.code}: ${f.message}`;
}

export interface FindingTally {
	errors: number;
	warnings: number;
}

export function tally(findings: Iterable<Pick<Finding, 'severity'>>): FindingTally {
	const t = { errors: 0, warnings: 0 };
	for (const f of findings) {
		if (f.severity === 'error') t.errors++;
		else t.warnings++;
	}
	return t;
}
