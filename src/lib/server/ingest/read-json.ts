// JSON and NDJSON rows. NDJSON: one object per line, `row` = the 1-based line number. JSON: one array
// of objects, streamed element by element (json-array.ts), `row` = the 1-based element position.
import type { Finding } from '../../schema/findings';
import { byteChunks, detectEncoding, sniffBinary, SniffingDecoder } from './decode';
import { binaryFinding } from './binary';
import { JsonArraySplitter } from './json-array';
import {
	fileFinding,
	peekBytes,
	rowFinding,
	windows1252Finding,
	type ReadLimits,
	type ReadOptions,
	type RowEvent,
	type RowFormat
} from './row-events';

type Input = NodeJS.ReadableStream | AsyncIterable<Uint8Array>;

/** One parsed JSON value as a row event (an object) or a rejected-row finding. */
function rowFromValue(value: unknown, rowNo: number, what: string, limits: ReadLimits): RowEvent {
	if (value === null || typeof value !== 'object' || Array.isArray(value)) {
		const kind =
			value === null
				? 'null'
				: Array.isArray(value)
					? 'a list'
					: typeof value === 'boolean'
						? 'true/false'
						: typeof value === 'number'
							? 'a number'
							: 'a text string';
		return {
			kind: 'finding',
			finding: rowFinding(rowNo, 'not-an-object', `${what} is ${kind}, not an object of column names and values. It was skipped.`, {
				rule: { rule: 'type', expected: 'object' }
			})
		};
	}
	const entries = Object.entries(value as Record<string, unknown>);
	if (entries.length > limits.maxColumns)
		return {
			kind: 'finding',
			finding: rowFinding(
				rowNo,
				'too-many-columns',
				`${what} has ${entries.length} properties; the limit is ${limits.maxColumns}. It was skipped.`,
				{
					rule: { rule: 'max-columns', max: limits.maxColumns }
				}
			)
		};
	const values: Record<string, unknown> = {};
	const findings: Finding[] = [];
	for (const [k, v] of entries) {
		if (typeof v === 'string' && v.length > limits.maxCellChars) {
			findings.push(
				rowFinding(
					rowNo,
					'cell-too-large',
					`The value of ${k} holds ${v.length} characters; the limit is ${limits.maxCellChars}. It was not read.`,
					{
						column: k,
						rule: { rule: 'max-cell-size', max: limits.maxCellChars }
					}
				)
			);
			continue;
		}
		values[k] = v;
	}
	return findings.length > 0 ? { kind: 'row', row: rowNo, values, findings } : { kind: 'row', row: rowNo, values };
}

async function* decoded(input: Input, opts: ReadOptions, format: RowFormat): AsyncGenerator<{ text: string } | { event: RowEvent }> {
	const { head, all } = await peekBytes(byteChunks(input)[Symbol.asyncIterator](), 4096);
	const detected = detectEncoding(head, opts.encoding);
	if (head.length === detected.bomLength) {
		yield { event: { kind: 'source', encoding: detected.encoding, sheet: null } };
		yield { event: { kind: 'finding', finding: fileFinding('empty-file', 'The file is empty.', { rule: 'not-empty' }) } };
		return;
	}
	const binary = sniffBinary(head, detected.encoding);
	if (binary) {
		yield { event: { kind: 'source', encoding: detected.encoding, sheet: null } };
		yield { event: { kind: 'finding', finding: binaryFinding(binary, format) } };
		return;
	}
	const decoder = new SniffingDecoder(opts.encoding);
	let sourceSent = false;
	let reported = false;
	const announce = function* (): Generator<{ event: RowEvent }> {
		if (!sourceSent) {
			sourceSent = true;
			yield { event: { kind: 'source', encoding: decoder.label, sheet: null } };
		}
		if (decoder.fellBack && !reported) {
			reported = true;
			yield { event: { kind: 'finding', finding: windows1252Finding() } };
		}
	};
	for await (const chunk of all) {
		const text = decoder.push(chunk);
		yield* announce();
		if (text) yield { text };
	}
	const text = decoder.end();
	yield* announce();
	if (text) yield { text };
}

export async function* readNdjson(input: Input, opts: ReadOptions, limits: ReadLimits): AsyncGenerator<RowEvent> {
	let line = 1;
	let carry = '';
	let skipping = false; // inside a line longer than the limit
	let rows = 0;
	let empty = true;
	function* finishLine(text: string): Generator<RowEvent> {
		const s = text.endsWith('\r') ? text.slice(0, -1) : text;
		if (s.trim() === '') return;
		rows++;
		let value: unknown;
		try {
			value = JSON.parse(s);
		} catch (e) {
			yield {
				kind: 'finding',
				finding: rowFinding(line, 'ndjson-bad-line', `Line ${line} is not valid JSON (${(e as Error).message}). It was skipped.`, {
					rule: { rule: 'json' }
				})
			};
			return;
		}
		yield rowFromValue(value, line, `Line ${line}`, limits);
	}
	for await (const part of decoded(input, opts, 'ndjson')) {
		if ('event' in part) {
			if (part.event.kind === 'finding' && part.event.finding.code === 'empty-file') empty = true;
			yield part.event;
			if (part.event.kind === 'finding' && part.event.finding.severity === 'error' && part.event.finding.row === null) return;
			continue;
		}
		empty = false;
		let start = 0;
		const text = part.text;
		while (start <= text.length) {
			const nl = text.indexOf('\n', start);
			const end = nl < 0 ? text.length : nl;
			if (!skipping) {
				if (carry.length + (end - start) > limits.maxRowChars) {
					skipping = true;
					carry = '';
				} else carry += text.slice(start, end);
			}
			if (nl < 0) break;
			if (skipping) {
				rows++;
				yield {
					kind: 'finding',
					finding: rowFinding(
						line,
						'row-too-large',
						`Line ${line} is longer than the limit of ${limits.maxRowChars} characters. It was skipped.`,
						{
							rule: { rule: 'max-row-size', max: limits.maxRowChars }
						}
					)
				};
				skipping = false;
			} else yield* finishLine(carry);
			carry = '';
			line++;
			start = nl + 1;
		}
	}
	if (skipping) {
		rows++;
		yield {
			kind: 'finding',
			finding: rowFinding(
				line,
				'row-too-large',
				`Line ${line} is longer than the limit of ${limits.maxRowChars} characters. It was skipped.`,
				{
					rule: { rule: 'max-row-size', max: limits.maxRowChars }
				}
			)
		};
	} else if (carry) yield* finishLine(carry);
	if (!empty && rows === 0)
		yield {
			kind: 'finding',
			finding: fileFinding('no-rows', 'The file has no records (only blank lines).', { rule: 'has-rows' }, 'warning')
		};
}

export async function* readJson(input: Input, opts: ReadOptions, limits: ReadLimits): AsyncGenerator<RowEvent> {
	const splitter = new JsonArraySplitter(limits.maxRowChars);
	let rows = 0;
	let empty = false;
	function* handle(events: ReturnType<JsonArraySplitter['push']>): Generator<RowEvent, boolean> {
		for (const e of events) {
			if (e.kind === 'error') {
				const code = e.problem === 'empty' ? 'empty-file' : e.problem === 'not-an-array' ? 'json-not-an-array' : 'json-syntax';
				const message =
					e.problem === 'empty'
						? 'The file holds only blank space.'
						: e.problem === 'not-an-array'
							? `The JSON must be an array of records ([{…}, {…}]), but ${e.detail}.`
							: `The JSON array is broken near element ${e.index}: ${e.detail}. Nothing from there on could be read.`;
				yield { kind: 'finding', finding: fileFinding(code, message, { rule: 'json', expected: 'array of objects', element: e.index }) };
				return false;
			}
			rows++;
			if (e.kind === 'too-large') {
				yield {
					kind: 'finding',
					finding: rowFinding(
						e.index,
						'row-too-large',
						`Element ${e.index} is ${e.chars} characters long; the limit is ${limits.maxRowChars}. It was skipped.`,
						{
							rule: { rule: 'max-row-size', max: limits.maxRowChars }
						}
					)
				};
				continue;
			}
			let value: unknown;
			try {
				value = JSON.parse(e.text);
			} catch (err) {
				yield {
					kind: 'finding',
					finding: rowFinding(e.index, 'json-syntax', `Element ${e.index} is not valid JSON (${(err as Error).message}). It was skipped.`, {
						rule: { rule: 'json' }
					})
				};
				continue;
			}
			yield rowFromValue(value, e.index, `Element ${e.index}`, limits);
		}
		return true;
	}
	for await (const part of decoded(input, opts, 'json')) {
		if ('event' in part) {
			if (part.event.kind === 'finding' && part.event.finding.code === 'empty-file') empty = true;
			yield part.event;
			if (part.event.kind === 'finding' && part.event.finding.severity === 'error' && part.event.finding.row === null) return;
			continue;
		}
		if (!(yield* handle(splitter.push(part.text)))) return;
	}
	if (empty) return;
	if (!(yield* handle(splitter.end()))) return;
	if (rows === 0) yield { kind: 'finding', finding: fileFinding('no-rows', 'The JSON array is empty.', { rule: 'has-rows' }, 'warning') };
}
