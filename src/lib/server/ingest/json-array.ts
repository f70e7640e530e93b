// An incremental splitter for a JSON array of objects (RFC 8259): it finds where each top-level
// element starts and ends without parsing the whole document, so a large array streams in bounded
// memory. Each element's text is then parsed on its own with JSON.parse. Pure.
export type SplitEvent =
	| { kind: 'element'; index: number; text: string }
	/** The element was longer than the limit; its text was not kept. */
	| { kind: 'too-large'; index: number; chars: number }
	/** The document is not an array, or breaks the array syntax; splitting stops. */
	| { kind: 'error'; problem: 'empty' | 'not-an-array' | 'syntax' | 'trailing-content' | 'unterminated'; detail: string; index: number };

const WS = new Set([' ', '\t', '\n', '\r']);

export class JsonArraySplitter {
	private state: 'start' | 'first' | 'element' | 'in-element' | 'after' | 'done' | 'failed' = 'start';
	private depth = 0;
	private inString = false;
	private escape = false;
	private buf: string[] = [];
	private bufChars = 0;
	private index = 0;
	private tooLarge = false;

	constructor(private readonly maxElementChars: number) {}

	get finished(): boolean {
		return this.state === 'done' || this.state === 'failed';
	}

	push(text: string): SplitEvent[] {
		const out: SplitEvent[] = [];
		let segStart = this.state === 'in-element' ? 0 : -1; // start of the current element's text inside `text`
		const flush = (end: number) => {
			if (segStart < 0) return;
			const len = end - segStart;
			if (!this.tooLarge) {
				if (this.bufChars + len > this.maxElementChars) {
					this.tooLarge = true;
					this.buf = [];
				} else {
					this.buf.push(text.slice(segStart, end));
				}
				this.bufChars += len;
			} else this.bufChars += len;
			segStart = -1;
		};
		const finishElement = (end: number) => {
			flush(end);
			this.index++;
			if (this.tooLarge) out.push({ kind: 'too-large', index: this.index, chars: this.bufChars });
			else out.push({ kind: 'element', index: this.index, text: this.buf.join('') });
			this.buf = [];
			this.bufChars = 0;
			this.tooLarge = false;
		};
		const fail = (problem: Extract<SplitEvent, { kind: 'error' }>['problem'], detail: string) => {
			this.state = 'failed';
			out.push({ kind: 'error', problem, detail, index: this.index + 1 });
		};

		for (let i = 0; i < text.length && this.state !== 'failed'; i++) {
			const ch = text[i];
			switch (this.state) {
				case 'start':
					if (WS.has(ch)) break;
					if (ch === '[') this.state = 'first';
					else fail('not-an-array', ch === '{' ? 'the document is a single object' : `the document starts with ${JSON.stringify(ch)}`);
					break;
				case 'first':
				case 'element':
					if (WS.has(ch)) break;
					if (ch === ']') {
						if (this.state === 'first') this.state = 'done';
						else fail('syntax', 'a comma is followed by the end of the array');
						break;
					}
					if (ch === ',') {
						fail('syntax', 'an element is missing between two commas');
						break;
					}
					this.state = 'in-element';
					segStart = i;
					this.depth = 0;
					this.inString = false;
					this.escape = false;
					i--; // re-read this character inside the element
					break;
				case 'in-element':
					if (this.inString) {
						if (this.escape) this.escape = false;
						else if (ch === '\\') this.escape = true;
						else if (ch === '"') this.inString = false;
						break;
					}
					if (ch === '"') this.inString = true;
					else if (ch === '{' || ch === '[') this.depth++;
					else if (ch === '}' || ch === ']') {
						if (this.depth === 0) {
							// `]` closing the array right after a scalar element
							if (ch === ']') {
								finishElement(i);
								this.state = 'done';
							} else fail('syntax', 'an unmatched }');
							break;
						}
						this.depth--;
						if (this.depth === 0) {
							finishElement(i + 1);
							this.state = 'after';
						}
					} else if (ch === ',' && this.depth === 0) {
						finishElement(i);
						this.state = 'element';
					}
					break;
				case 'after':
					if (WS.has(ch)) break;
					if (ch === ',') this.state = 'element';
					else if (ch === ']') this.state = 'done';
					else fail('syntax', `expected a comma or the end of the array but found ${JSON.stringify(ch)}`);
					break;
				case 'done':
					if (!WS.has(ch)) fail('trailing-content', 'there is more content after the end of the array');
					break;
			}
		}
		if (this.state === 'in-element') flush(text.length);
		return out;
	}

	end(): SplitEvent[] {
		if (this.state === 'done' || this.state === 'failed') return [];
		if (this.state === 'start') return [{ kind: 'error', problem: 'empty', detail: 'the document is empty', index: 0 }];
		this.state = 'failed';
		return [{ kind: 'error', problem: 'unterminated', detail: 'the array is not closed with ]', index: this.index + 1 }];
	}
}
