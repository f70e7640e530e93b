// A small MIME reader for the messages the fake SMTP server receives (RFC 5322 headers, RFC 2045
// transfer encodings, RFC 2046 multipart, RFC 2047 encoded words). Enough for what nodemailer
// writes (multipart/alternative with quoted-printable or base64 parts); not a general mail parser.
// Pure: bytes in, fields out.

export interface ParsedMail {
	headers: Map<string, string[]>;
	messageId: string | null;
	from: string | null;
	to: string | null;
	subject: string | null;
	text: string | null;
	html: string | null;
}

interface Part {
	headers: Map<string, string[]>;
	body: string; // binary string: one char per byte (latin1)
}

/** Parses a raw message (the bytes received after DATA). */
export function parseMail(raw: Uint8Array): ParsedMail {
	const root = splitPart(Buffer.from(raw).toString('latin1'));
	const found: { text: string | null; html: string | null } = { text: null, html: null };
	collectBodies(root, found, 0);
	const header = (name: string) => {
		const v = root.headers.get(name)?.[0];
		return v === undefined ? null : decodeEncodedWords(v);
	};
	return {
		headers: root.headers,
		messageId: header('message-id'),
		from: header('from'),
		to: header('to'),
		subject: header('subject'),
		text: found.text,
		html: found.html
	};
}

function splitPart(s: string): Part {
	const m = /\r?\n\r?\n/.exec(s);
	const head = m ? s.slice(0, m.index) : s;
	const body = m ? s.slice(m.index + m[0].length) : '';
	const headers = new Map<string, string[]>();
	// Unfold (RFC 5322 §2.2.3): a line starting with white space continues the previous one.
	const lines = head.split(/\r?\n/);
	const unfolded: string[] = [];
	for (const line of lines) {
		if (/^[ \t]/.test(line) && unfolded.length > 0) unfolded[unfolded.length - 1] += ' ' + line.trim();
		else if (line.length > 0) unfolded.push(line);
	}
	for (const line of unfolded) {
		const i = line.indexOf(':');
		if (i <= 0) continue;
		const name = line.slice(0, i).trim().toLowerCase();
		// Header bytes may be raw UTF-8 (RFC 6532); read them as such.
		const value = Buffer.from(line.slice(i + 1).trim(), 'latin1').toString('utf8');
		headers.set(name, [...(headers.get(name) ?? []), value]);
	}
	return { headers, body };
}

/** `text/plain; charset="utf-8"` → { type: 'text/plain', params: { charset: 'utf-8' } }. */
export function parseHeaderParams(value: string): { value: string; params: Record<string, string> } {
	const [first, ...rest] = splitOutsideQuotes(value, ';');
	const params: Record<string, string> = {};
	for (const p of rest) {
		const i = p.indexOf('=');
		if (i <= 0) continue;
		let v = p.slice(i + 1).trim();
		if (v.startsWith('"') && v.endsWith('"')) v = v.slice(1, -1).replace(/\\(.)/g, '$1');
		params[p.slice(0, i).trim().toLowerCase()] = v;
	}
	return { value: first.trim().toLowerCase(), params };
}

function splitOutsideQuotes(s: string, sep: string): string[] {
	const out: string[] = [];
	let cur = '';
	let quoted = false;
	for (let i = 0; i < s.length; i++) {
		const c = s[i];
		if (c === '"' && s[i - 1] !== '\\') quoted = !quoted;
		if (c === sep && !quoted) {
			out.push(cur);
			cur = '';
		} else cur += c;
	}
	out.push(cur);
	return out;
}

function collectBodies(part: Part, found: { text: string | null; html: string | null }, depth: number): void {
	if (depth > 10) return;
	const ct = parseHeaderParams(part.headers.get('content-type')?.[0] ?? 'text/plain; charset=us-ascii');
	const disposition = parseHeaderParams(part.headers.get('content-disposition')?.[0] ?? 'inline').value;
	if (ct.value.startsWith('multipart/')) {
		const boundary = ct.params.boundary;
		if (!boundary) return;
		for (const child of splitMultipart(part.body, boundary)) collectBodies(splitPart(child), found, depth + 1);
		return;
	}
	if (disposition === 'attachment') return;
	if (ct.value !== 'text/plain' && ct.value !== 'text/html') return;
	const bytes = decodeTransfer(part.body, (part.headers.get('content-transfer-encoding')?.[0] ?? '7bit').trim().toLowerCase());
	const text = decodeCharset(bytes, ct.params.charset ?? 'us-ascii');
	if (ct.value === 'text/plain' && found.text === null) found.text = text;
	if (ct.value === 'text/html' && found.html === null) found.html = text;
}

/** The parts between `--boundary` delimiter lines, up to the closing `--boundary--` (RFC 2046 §5.1.1). */
function splitMultipart(body: string, boundary: string): string[] {
	const lines = body.split(/\r?\n/);
	const parts: string[] = [];
	let current: string[] | null = null;
	for (const line of lines) {
		const trimmed = line.trimEnd();
		if (trimmed === `--${boundary}--`) {
			if (current) parts.push(current.join('\r\n'));
			return parts;
		}
		if (trimmed === `--${boundary}`) {
			if (current) parts.push(current.join('\r\n'));
			current = [];
			continue;
		}
		current?.push(line);
	}
	if (current) parts.push(current.join('\r\n'));
	return parts;
}

/** Undoes a Content-Transfer-Encoding (RFC 2045 §6); returns the bytes. */
export function decodeTransfer(body: string, encoding: string): Buffer {
	if (encoding === 'base64') return Buffer.from(body.replace(/[^A-Za-z0-9+/=]/g, ''), 'base64');
	if (encoding === 'quoted-printable') return decodeQuotedPrintable(body);
	return Buffer.from(body, 'latin1');
}

/** Quoted-printable (RFC 2045 §6.7): `=XX` is a byte, `=` at the end of a line is a soft line break. */
export function decodeQuotedPrintable(s: string): Buffer {
	const noSoftBreaks = s.replace(/[ \t]+(?=\r?\n)/g, '').replace(/=\r?\n/g, '');
	const bytes: number[] = [];
	for (let i = 0; i < noSoftBreaks.length; i++) {
		const c = noSoftBreaks[i];
		if (c === '=' && /^[0-9A-Fa-f]{2}$/.test(noSoftBreaks.slice(i + 1, i + 3))) {
			bytes.push(parseInt(noSoftBreaks.slice(i + 1, i + 3), 16));
			i += 2;
		} else bytes.push(c.charCodeAt(0) & 0xff);
	}
	return Buffer.from(bytes);
}

function decodeCharset(bytes: Uint8Array, charset: string): string {
	try {
		return new TextDecoder(charset.toLowerCase() === 'us-ascii' ? 'utf-8' : charset).decode(bytes);
	} catch {
		return new TextDecoder('utf-8').decode(bytes);
	}
}

/** RFC 2047 encoded words (`=?UTF-8?Q?…?=`, `=?UTF-8?B?…?=`) in a header value; white space between
 * two adjacent encoded words is dropped (§6.2). */
export function decodeEncodedWords(value: string): string {
	const word = /=\?([^?\s]+)\?([BbQq])\?([^?\s]*)\?=/g;
	const joined = value.replace(/(=\?[^?\s]+\?[BbQq]\?[^?\s]*\?=)\s+(?==\?[^?\s]+\?[BbQq]\?[^?\s]*\?=)/g, '$1');
	return joined.replace(word, (_m, charset: string, enc: string, text: string) => {
		const cs = charset.split('*')[0]; // RFC 2231 language suffix
		// Q encoding (§4.2): like quoted-printable, with `_` standing for a space.
		const bytes = enc.toUpperCase() === 'B' ? Buffer.from(text, 'base64') : decodeQuotedPrintable(text.replace(/_/g, ' '));
		return decodeCharset(bytes, cs);
	});
}
