// Bytes → text for CSV, NDJSON and JSON uploads, chunk by chunk (a chunk may end inside a character).
//
// - A byte-order mark picks the encoding: EF BB BF UTF-8, FF FE UTF-16LE, FE FF UTF-16BE (Unicode
//   Standard §23.8 / WHATWG Encoding "BOM sniff"); UTF-16 without a mark is recognised by the NUL
//   bytes of its ASCII header.
// - Otherwise the text is UTF-8 — except bytes that are not valid UTF-8 (RFC 3629 §4 table), which are
//   read as Windows-1252, the encoding Excel's plain "CSV" uses on US Windows. Valid UTF-8 sequences
//   stay UTF-8, so a file that is UTF-8 except for a few pasted Windows-1252 cells decodes correctly.
//   The decoder remembers that it fell back so the reader can say so in a finding.
import { isUtf8 } from 'node:buffer';

export type TextEncodingName = 'utf-8' | 'windows-1252' | 'utf-16le' | 'utf-16be';

// WHATWG Encoding Standard, index-windows-1252: code points for bytes 0x80–0x9F (0xA0–0xFF = Latin-1).
const CP1252_80_9F = [
	0x20ac, 0x81, 0x201a, 0x192, 0x201e, 0x2026, 0x2020, 0x2021, 0x2c6, 0x2030, 0x160, 0x2039, 0x152, 0x8d, 0x17d, 0x8f, 0x90, 0x2018, 0x2019,
	0x201c, 0x201d, 0x2022, 0x2013, 0x2014, 0x2dc, 0x2122, 0x161, 0x203a, 0x153, 0x9d, 0x17e, 0x178
];

export function windows1252Char(byte: number): string {
	return String.fromCharCode(byte >= 0x80 && byte <= 0x9f ? CP1252_80_9F[byte - 0x80] : byte);
}

/** Length of the valid UTF-8 sequence starting at `i`, 0 if invalid, -1 if it may continue past the end. */
function utf8SequenceLength(b: Uint8Array, i: number): number {
	const b0 = b[i];
	if (b0 < 0x80) return 1;
	let need: number;
	let lo = 0x80;
	let hi = 0xbf;
	if (b0 >= 0xc2 && b0 <= 0xdf) need = 2;
	else if (b0 >= 0xe0 && b0 <= 0xef) {
		need = 3;
		if (b0 === 0xe0) lo = 0xa0;
		if (b0 === 0xed) hi = 0x9f;
	} else if (b0 >= 0xf0 && b0 <= 0xf4) {
		need = 4;
		if (b0 === 0xf0) lo = 0x90;
		if (b0 === 0xf4) hi = 0x8f;
	} else return 0;
	for (let k = 1; k < need; k++) {
		if (i + k >= b.length) return -1;
		const c = b[i + k];
		if (k === 1 ? c < lo || c > hi : c < 0x80 || c > 0xbf) return 0;
	}
	return need;
}

/** Index where a trailing, possibly incomplete UTF-8 sequence starts (b.length when none). */
function incompleteTailStart(b: Uint8Array): number {
	for (let i = b.length - 1; i >= Math.max(0, b.length - 3); i--) {
		const c = b[i];
		if ((c & 0xc0) === 0x80) continue;
		if (c >= 0xc2 && c <= 0xf4 && utf8SequenceLength(b, i) === -1) return i;
		return b.length;
	}
	return b.length;
}

const concat = (a: Uint8Array, b: Uint8Array): Uint8Array => {
	if (a.length === 0) return b;
	const out = new Uint8Array(a.length + b.length);
	out.set(a, 0);
	out.set(b, a.length);
	return out;
};

/**
 * The encoding of a file from its first bytes: a byte-order mark, else UTF-16 recognised by the NUL
 * bytes of an ASCII start, else the declared charset, else UTF-8.
 */
export function detectEncoding(b: Uint8Array, declared?: TextEncodingName): { encoding: TextEncodingName; bomLength: number } {
	if (b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf) return { encoding: 'utf-8', bomLength: 3 };
	if (b[0] === 0xff && b[1] === 0xfe) return { encoding: 'utf-16le', bomLength: 2 };
	if (b[0] === 0xfe && b[1] === 0xff) return { encoding: 'utf-16be', bomLength: 2 };
	if (declared) return { encoding: declared, bomLength: 0 };
	if (b.length >= 4 && b[0] !== 0 && b[1] === 0 && b[2] !== 0 && b[3] === 0) return { encoding: 'utf-16le', bomLength: 0 };
	if (b.length >= 4 && b[0] === 0 && b[1] !== 0 && b[2] === 0 && b[3] !== 0) return { encoding: 'utf-16be', bomLength: 0 };
	return { encoding: 'utf-8', bomLength: 0 };
}

export class SniffingDecoder {
	/** The encoding of the bytes; 'utf-8' may still fall back byte by byte (see `fellBack`). */
	base: TextEncodingName | null = null;
	/** Bytes that were not UTF-8 and were read as Windows-1252. */
	fallbackBytes = 0;
	/** Whether a byte-order mark was present (and removed). */
	bom = false;
	private pending: Uint8Array = new Uint8Array(0);
	private utf16: TextDecoder | null = null;

	constructor(private readonly declared?: TextEncodingName) {}

	get fellBack(): boolean {
		return this.fallbackBytes > 0;
	}

	/** The encoding to report: windows-1252 once any byte fell back. */
	get label(): TextEncodingName {
		if (this.base === 'utf-8' && this.fellBack) return 'windows-1252';
		return this.base ?? this.declared ?? 'utf-8';
	}

	push(chunk: Uint8Array): string {
		let bytes = concat(this.pending, chunk);
		this.pending = new Uint8Array(0);
		if (this.base === null) {
			if (bytes.length < 4) {
				this.pending = bytes;
				return '';
			}
			bytes = this.sniff(bytes);
		}
		return this.decode(bytes, false);
	}

	end(): string {
		let bytes = this.pending;
		this.pending = new Uint8Array(0);
		if (this.base === null) bytes = this.sniff(bytes);
		return this.decode(bytes, true);
	}

	private sniff(b: Uint8Array): Uint8Array {
		const d = detectEncoding(b, this.declared);
		this.base = d.encoding;
		this.bom = d.bomLength > 0;
		return b.subarray(d.bomLength);
	}

	private decode(b: Uint8Array, final: boolean): string {
		switch (this.base) {
			case 'utf-16le':
			case 'utf-16be':
				this.utf16 ??= new TextDecoder(this.base);
				return this.utf16.decode(b, { stream: !final });
			case 'windows-1252': {
				let s = '';
				for (let i = 0; i < b.length; i++) s += windows1252Char(b[i]);
				return s;
			}
			default:
				return this.decodeUtf8(b, final);
		}
	}

	private decodeUtf8(b: Uint8Array, final: boolean): string {
		const cut = final ? b.length : incompleteTailStart(b);
		if (cut < b.length) this.pending = b.slice(cut);
		const body = b.subarray(0, cut);
		if (isUtf8(body)) return Buffer.from(body.buffer, body.byteOffset, body.byteLength).toString('utf8');
		let out = '';
		let start = 0;
		let i = 0;
		while (i < body.length) {
			const n = utf8SequenceLength(body, i);
			if (n > 0) {
				i += n;
				continue;
			}
			if (i > start) out += Buffer.from(body.buffer, body.byteOffset + start, i - start).toString('utf8');
			out += windows1252Char(body[i]);
			this.fallbackBytes++;
			i++;
			start = i;
		}
		if (i > start) out += Buffer.from(body.buffer, body.byteOffset + start, i - start).toString('utf8');
		return out;
	}
}

/** What the first bytes say about a file that should be text. */
export type BinaryKind = 'zip' | 'ole' | 'pdf' | 'binary';

export function sniffBinary(first: Uint8Array, base: TextEncodingName | null): BinaryKind | null {
	if (first.length >= 4 && first[0] === 0x50 && first[1] === 0x4b && first[2] === 0x03 && first[3] === 0x04) return 'zip';
	if (first.length >= 4 && first[0] === 0xd0 && first[1] === 0xcf && first[2] === 0x11 && first[3] === 0xe0) return 'ole';
	if (first.length >= 4 && first[0] === 0x25 && first[1] === 0x50 && first[2] === 0x44 && first[3] === 0x46) return 'pdf';
	if (base !== 'utf-16le' && base !== 'utf-16be') {
		const n = Math.min(first.length, 4096);
		for (let i = 0; i < n; i++) if (first[i] === 0) return 'binary';
	}
	return null;
}

/** Input as an async iterable of byte chunks (Node streams yield Buffers, or strings when an encoding is set). */
export async function* byteChunks(input: NodeJS.ReadableStream | AsyncIterable<Uint8Array>): AsyncGenerator<Uint8Array> {
	for await (const chunk of input as AsyncIterable<Uint8Array | string>) {
		yield typeof chunk === 'string' ? Buffer.from(chunk, 'utf8') : chunk;
	}
}
