// Reading a number written as text (a CSV cell, an XLSX text cell, a JSON string). Only plain decimal
// notation is accepted — digits, an optional sign and one decimal point — because everything else is
// ambiguous in a report: `1,5` is one and a half in much of Europe and fifteen in a thousands-grouped
// US figure, `1e400` is not a finite double, `$1,200` carries a unit. Each refusal says why.
export type NumberTextProblem =
	/** A comma in the number: a decimal comma or a thousands separator. */
	| 'comma'
	/** Scientific notation (1e3, 1E-05). */
	| 'exponent'
	/** Currency signs, percent, units, spaces or other characters around the digits. */
	| 'symbols'
	/** NaN, Infinity, N/A and other words for "no number". */
	| 'not-a-number'
	/** Digits so many that the value is not a finite double. */
	| 'too-large';

export type NumberTextResult = { ok: true; value: number } | { ok: false; problem: NumberTextProblem };

const PLAIN = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)$/;
const WITH_COMMA = /^[+-]?[\d.,]*\d[\d.,]*$/;
const EXPONENT = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)[eE][+-]?\d+$/;
const NO_NUMBER = /^[+-]?(?:nan|inf|infinity|n\/?a|#n\/a|none|null|undefined|-+|\?+)$/i;

export function parseNumberText(text: string): NumberTextResult {
	const s = text.trim();
	if (PLAIN.test(s)) {
		const value = Number(s);
		if (!Number.isFinite(value)) return { ok: false, problem: 'too-large' };
		return { ok: true, value: Object.is(value, -0) ? 0 : value };
	}
	if (NO_NUMBER.test(s)) return { ok: false, problem: 'not-a-number' };
	if (EXPONENT.test(s)) return { ok: false, problem: 'exponent' };
	if (s.includes(',') && WITH_COMMA.test(s)) return { ok: false, problem: 'comma' };
	if (/\d/.test(s)) return { ok: false, problem: 'symbols' };
	return { ok: false, problem: 'not-a-number' };
}
