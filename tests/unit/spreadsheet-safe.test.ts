// Source: OWASP Foundation, "CSV Injection" (community page): cells beginning with =, +, -, @, tab (0x09)
// or carriage return (0x0D) are interpreted as formulas by spreadsheet programs; prefixing a single quote
// makes them text.
import { describe, expect, it } from 'vitest';
import { neutraliseCell } from '../../src/lib/domain/spreadsheet-safe';

describe('neutraliseCell', () => {
	it.each(['=HYPERLINK("http://x","y")', '+1+2', '-1+2', '@SUM(A1)', '\t=1', '\r=1'])('quotes %j', (v) => {
		expect(neutraliseCell(v)).toBe(`'${v}`);
	});
	it.each(['plain', '12.5', ' =not first', ''])('leaves %j alone', (v) => {
		expect(neutraliseCell(v)).toBe(v);
	});
});
