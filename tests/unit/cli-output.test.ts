// What the CLI writes where: a progress bar only on a terminal without NO_COLOR, plain lines
// otherwise; findings formatted like a compiler's; batch summaries; byte sizes.
import { PassThrough, Readable } from 'node:stream';
import { describe, expect, it } from 'vitest';
import { batchExitCode, summarizeBatch, type BatchView } from '../../cli/batch-view';
import { formatFinding } from '../../cli/findings-format';
import { formatBytes, isInteractive, Ui, type Io, type OutStream } from '../../cli/output';
import { fileProgress } from '../../cli/progress';

function io(tty: boolean, env: NodeJS.ProcessEnv = {}) {
	const stderr = new PassThrough() as PassThrough & OutStream;
	const stdout = new PassThrough() as PassThrough & OutStream;
	stderr.isTTY = tty;
	stdout.isTTY = tty;
	stderr.columns = 100;
	let err = '';
	stderr.on('data', (b) => (err += b));
	const value: Io = { stdout, stderr, stdin: Readable.from([]), env, cwd: '/' };
	return { io: value, err: () => err };
}

describe('progress on stderr', () => {
	it('on a terminal: a bar redrawn in place, then the final line', async () => {
		const t = io(true);
		const p = fileProgress(new Ui(t.io), 'practices.csv', 1_000_000);
		p.sent(250_000);
		p.sent(1_000_000);
		await new Promise((r) => setTimeout(r, 150));
		p.done('practices.csv: sent 1.0 MB as batch 7 (mode all)');
		expect(t.err()).toMatch(/practices\.csv {2}\[█+░*\] \d+%/);
		expect(t.err()).toContain('practices.csv: sent 1.0 MB as batch 7 (mode all)\n');
	});

	it.each([
		['not a terminal', false, {}],
		['NO_COLOR', true, { NO_COLOR: '1' }],
		['TERM=dumb', true, { TERM: 'dumb' }]
	])('%s: no bar, no carriage returns, just one line per file', (_what, tty, env) => {
		const t = io(tty as boolean, env as NodeJS.ProcessEnv);
		const p = fileProgress(new Ui(t.io), 'practices.csv', 1000);
		p.sent(500);
		p.rows(10);
		p.done('practices.csv: sent 1.0 kB as batch 7 (mode all)');
		expect(t.err()).toBe('practices.csv: sent 1.0 kB as batch 7 (mode all)\n');
	});

	it('--quiet: nothing at all', () => {
		const t = io(true);
		const p = fileProgress(new Ui(t.io, { quiet: true }), 'x.csv', 10);
		p.sent(10);
		p.done('x.csv: sent');
		expect(t.err()).toBe('');
	});

	it('colour follows the stream, NO_COLOR and --no-color', () => {
		const tty = { isTTY: true } as OutStream;
		expect(isInteractive(tty, {})).toBe(true);
		expect(isInteractive(tty, { NO_COLOR: '' })).toBe(true); // the convention: set and non-empty
		expect(isInteractive(tty, { NO_COLOR: 'yes' })).toBe(false);
		expect(isInteractive(tty, {}, false)).toBe(false);
		expect(isInteractive({ isTTY: false } as OutStream, {})).toBe(false);
	});
});

describe('findings like a compiler', () => {
	const f = {
		row: 17,
		column_number: 4,
		severity: 'error' as const,
		code: 'bad-date',
		message: 'installed_on is "2026-02-30", which is not a real date.'
	};
	it('file:row:column: severity code: message', () => {
		expect(formatFinding('practices.csv', f)).toBe(
			'practices.csv:17:4: error bad-date: installed_on is "2026-02-30", which is not a real date.'
		);
	});
	it('without a column, or for the whole file', () => {
		expect(formatFinding('a.ndjson', { ...f, column_number: null, code: 'json-syntax', message: 'Line 3 is not JSON.' })).toBe(
			'a.ndjson:17: error json-syntax: Line 3 is not JSON.'
		);
		expect(formatFinding('a.csv', { ...f, row: null, column_number: null, code: 'empty-file', message: 'The file is empty.' })).toBe(
			'a.csv: error empty-file: The file is empty.'
		);
	});
	it('severity in colour only on a terminal', () => {
		const plain = new Ui(io(false).io);
		expect(formatFinding('a.csv', f, plain)).not.toContain('\u001b[');
		expect(formatFinding('a.csv', f, new Ui(io(true).io))).toContain('\u001b[31merror\u001b[39m');
	});
});

describe('batch summaries and their exit codes', () => {
	const base = {
		id: '12',
		district: { code: 'BLH', name: 'Bluestem Hills Conservation District' },
		mode: 'valid',
		status: 'done',
		valid: true,
		progress: { rows_done: 1200 },
		failure: null,
		counts: { rows: 1200, accepted: 1200, rejected: 0, errors: 0, warnings: 3, created: 1000, updated: 150, unchanged: 50, withdrawn: 0 }
	} as unknown as BatchView;

	it('a clean batch: exit 0 and the counts', () => {
		expect(batchExitCode(base)).toBe(0);
		expect(summarizeBatch(base, 'p.csv')).toBe(
			'p.csv: batch 12 done (mode valid, district BLH): 1,200 rows; 1,200 accepted; 0 rejected; 0 errors, 3 warnings; 1,000 created, 150 updated, 50 unchanged, 0 withdrawn'
		);
	});
	it('rejected rows or errors: exit 2; a failed batch: 1; still running: 0', () => {
		expect(batchExitCode({ ...base, valid: false, counts: { ...base.counts, rejected: 2, errors: 2 } })).toBe(2);
		expect(batchExitCode({ ...base, status: 'failed', failure: 'storage lost' })).toBe(1);
		expect(batchExitCode({ ...base, status: 'checking' })).toBe(0);
		expect(summarizeBatch({ ...base, status: 'checking' }, 'p.csv')).toBe(
			'p.csv: batch 12 checking (mode valid, district BLH); 1,200 rows checked so far'
		);
	});
	it('mode all with errors says nothing was saved; check says "would be"', () => {
		const all = {
			...base,
			mode: 'all',
			valid: false,
			counts: { ...base.counts, accepted: 0, rejected: 1200, errors: 1, created: 0, updated: 0, unchanged: 0 }
		} as BatchView;
		expect(summarizeBatch(all, 'p.csv')).toMatch(/nothing saved \(mode all\)$/);
		expect(summarizeBatch({ ...base, mode: 'check' } as BatchView, 'p.csv')).toContain('1,200 would be accepted');
	});
});

it('sizes for people', () => {
	expect([0, 999, 1000, 1536, 12_345_678, 5e12].map(formatBytes)).toEqual(['0 B', '999 B', '1.0 kB', '1.5 kB', '12.3 MB', '5.0 TB']);
});
