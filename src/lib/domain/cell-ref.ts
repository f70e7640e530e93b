// Spreadsheet cell references: column letters from a 1-based column number (1 → A, 27 → AA), as in
// the Office Open XML A1 reference style (ECMA-376 Part 1, §18.17.2.3 "A1-style cell references").
export function columnLetters(column: number): string {
	if (!Number.isInteger(column) || column < 1) throw new RangeError(`column must be a positive integer, got ${column}`);
	let n = column;
	let out = '';
	while (n > 0) {
		const r = (n - 1) % 26;
		out = String.fromCharCode(65 + r) + out;
		n = Math.floor((n - 1) / 26);
	}
	return out;
}

/** `B17` for column 2, row 17. */
export function cellRef(column: number, row: number): string {
	return `${columnLetters(column)}${row}`;
}
