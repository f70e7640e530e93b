// Cells that a spreadsheet would run as a formula (OWASP "CSV injection"): a cell beginning with
// = + - @, a tab or a carriage return gets a leading apostrophe in the CSV files Runnel writes. Pure.
const FORMULA_START = /^[=+\-@\t\r]/;

export function neutraliseCell(value: string): string {
	return FORMULA_START.test(value) ? `'${value}` : value;
}
