// Checks an XLSX file (a ZIP archive, ECMA-376 Part 2 / PKWARE APPNOTE.TXT 6.3) on disk before the
// workbook reader opens it: it is a ZIP and not an OLE compound file (old .xls or a password-protected
// workbook, signature D0 CF 11 E0 A1 B1 1A E1 — [MS-CFB] §2.2); no encrypted entries; no ZIP64; not too
// many entries; entries laid end to end exactly as the central directory lists them (so a streaming
// reader sees the same entries); and the bytes that really come out of inflating each entry stay
// within the declared sizes and the overall cap — a zip bomb is stopped while inflating, before any
// XML parser sees it.
import { createReadStream } from 'node:fs';
import { open, type FileHandle } from 'node:fs/promises';
import { createInflateRaw } from 'node:zlib';
import type { ReadLimits } from './row-events';

export interface ZipEntryInfo {
	name: string;
	flags: number;
	method: number;
	compressedSize: number;
	uncompressedSize: number;
	localHeaderOffset: number;
	/** Where the entry's (compressed) data starts: after its local header, as checked against the directory. */
	dataStart: number;
}

export type ZipProblem = 'empty-file' | 'xlsx-not-zip' | 'xlsx-encrypted' | 'xlsx-too-large' | 'xlsx-invalid';
export type ZipVerdict =
	{ ok: true; entries: ZipEntryInfo[]; uncompressedBytes: number } | { ok: false; code: ZipProblem; message: string };

const SIG_LOCAL = 0x04034b50;
const SIG_CENTRAL = 0x02014b50;
const SIG_EOCD = 0x06054b50;
const SIG_DESCRIPTOR = 0x08074b50;
const OLE = [0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1];
/** Above this much unzipped data, a compression ratio beyond MAX_RATIO is treated as a bomb. */
const RATIO_FLOOR = 64 * 1024 * 1024;
/** Runnel's own rule of thumb: spreadsheet XML rarely compresses better than ~50:1. */
const MAX_RATIO = 200;

const fail = (code: ZipProblem, message: string): ZipVerdict => ({ ok: false, code, message });

async function readAt(fh: FileHandle, position: number, length: number): Promise<Buffer> {
	const buf = Buffer.alloc(length);
	const { bytesRead } = await fh.read(buf, 0, length, position);
	return buf.subarray(0, bytesRead);
}

const tooLarge = (limits: ReadLimits) =>
	fail(
		'xlsx-too-large',
		`The workbook unpacks to more than ${Math.round(limits.maxUncompressedBytes / 1024 / 1024)} MB (or far more than its size suggests). It may be a "zip bomb"; it was not opened. Split the data into smaller files.`
	);

export async function inspectZip(path: string, limits: ReadLimits): Promise<ZipVerdict> {
	const fh = await open(path, 'r');
	try {
		const size = (await fh.stat()).size;
		const start = await readAt(fh, 0, 8);
		if (start.length === 0) return fail('empty-file', 'The file is empty.');
		if (start.length === 8 && OLE.every((b, i) => start[i] === b))
			return fail(
				'xlsx-encrypted',
				'This workbook is password-protected (encrypted), or it is an old Excel 97–2003 .xls file. Remove the password (File › Info › Protect Workbook) and save it as an .xlsx workbook, then send it again.'
			);
		if (start.length < 4 || start.readUInt32LE(0) !== SIG_LOCAL)
			return fail(
				'xlsx-not-zip',
				'This file is not an XLSX workbook (an XLSX file is a ZIP archive, and this one is not). Save it from your spreadsheet as "Excel Workbook (.xlsx)".'
			);

		// End of central directory: the last 22 bytes plus an optional comment of up to 65,535 bytes.
		const tailLen = Math.min(size, 22 + 65535);
		const tail = await readAt(fh, size - tailLen, tailLen);
		let eocd = -1;
		for (let i = tail.length - 22; i >= 0; i--) {
			if (tail.readUInt32LE(i) === SIG_EOCD) {
				eocd = i;
				break;
			}
		}
		if (eocd < 0) return fail('xlsx-invalid', 'The workbook is damaged: its ZIP directory is missing (the file may be cut short).');
		const eocdPos = size - tailLen + eocd;
		const entryCount = tail.readUInt16LE(eocd + 10);
		const cdSize = tail.readUInt32LE(eocd + 12);
		const cdOffset = tail.readUInt32LE(eocd + 16);
		if (tail.readUInt16LE(eocd + 4) !== 0 || tail.readUInt16LE(eocd + 6) !== 0)
			return fail('xlsx-invalid', 'The workbook is a multi-part ZIP archive, which Runnel does not read.');
		if (entryCount === 0xffff || cdSize === 0xffffffff || cdOffset === 0xffffffff)
			return fail(
				'xlsx-invalid',
				'The workbook uses the ZIP64 format (meant for files over 4 GB), which Runnel does not read. Save it again from your spreadsheet.'
			);
		if (entryCount > limits.maxZipEntries)
			return fail('xlsx-too-large', `The workbook holds ${entryCount} parts; the limit is ${limits.maxZipEntries}. It was not opened.`);
		if (cdOffset + cdSize > eocdPos || cdSize > 46 * entryCount + 8 * 1024 * 1024)
			return fail('xlsx-invalid', 'The workbook is damaged: its ZIP directory does not fit the file.');

		const cd = await readAt(fh, cdOffset, cdSize);
		const entries: ZipEntryInfo[] = [];
		let p = 0;
		let declared = 0;
		for (let k = 0; k < entryCount; k++) {
			if (p + 46 > cd.length || cd.readUInt32LE(p) !== SIG_CENTRAL)
				return fail('xlsx-invalid', 'The workbook is damaged: its ZIP directory is unreadable.');
			const flags = cd.readUInt16LE(p + 8);
			const method = cd.readUInt16LE(p + 10);
			const compressedSize = cd.readUInt32LE(p + 20);
			const uncompressedSize = cd.readUInt32LE(p + 24);
			const nameLen = cd.readUInt16LE(p + 28);
			const extraLen = cd.readUInt16LE(p + 30);
			const commentLen = cd.readUInt16LE(p + 32);
			const localHeaderOffset = cd.readUInt32LE(p + 42);
			const name = cd.toString('utf8', p + 46, p + 46 + nameLen);
			p += 46 + nameLen + extraLen + commentLen;
			if (flags & 0x1 || flags & 0x40)
				return fail(
					'xlsx-encrypted',
					'Parts of this workbook are encrypted. Remove the password and save it as an .xlsx workbook, then send it again.'
				);
			if (method !== 0 && method !== 8)
				return fail(
					'xlsx-invalid',
					`The workbook uses a compression method (${method}) that spreadsheets do not write. Save it again from your spreadsheet.`
				);
			if (compressedSize === 0xffffffff || uncompressedSize === 0xffffffff || localHeaderOffset === 0xffffffff)
				return fail('xlsx-invalid', 'The workbook uses the ZIP64 format, which Runnel does not read. Save it again from your spreadsheet.');
			declared += uncompressedSize;
			entries.push({ name, flags, method, compressedSize, uncompressedSize, localHeaderOffset, dataStart: -1 });
		}
		if (declared > limits.maxUncompressedBytes) return tooLarge(limits);

		// Entries must sit end to end from byte 0 to the directory, each local header matching it.
		const ordered = [...entries].sort((a, b) => a.localHeaderOffset - b.localHeaderOffset);
		let expected = 0;
		for (const e of ordered) {
			if (e.localHeaderOffset !== expected)
				return fail('xlsx-invalid', 'The workbook is damaged or altered: its ZIP entries do not line up with its directory.');
			const lh = await readAt(fh, e.localHeaderOffset, 30);
			if (lh.length < 30 || lh.readUInt32LE(0) !== SIG_LOCAL)
				return fail('xlsx-invalid', 'The workbook is damaged: a ZIP entry header is missing.');
			const nameLen = lh.readUInt16LE(26);
			const extraLen = lh.readUInt16LE(28);
			const localName = (await readAt(fh, e.localHeaderOffset + 30, nameLen)).toString('utf8');
			if (localName !== e.name)
				return fail('xlsx-invalid', 'The workbook is damaged or altered: a ZIP entry name does not match its directory.');
			const start = e.localHeaderOffset + 30 + nameLen + extraLen;
			const end = start + e.compressedSize;
			let next = end;
			if (e.flags & 0x8) {
				const d = await readAt(fh, end, 4);
				next = end + (d.length === 4 && d.readUInt32LE(0) === SIG_DESCRIPTOR ? 16 : 12);
			}
			if (end > cdOffset) return fail('xlsx-invalid', 'The workbook is damaged: a ZIP entry runs past its end.');
			e.dataStart = start;
			expected = next;
		}
		if (expected !== cdOffset)
			return fail('xlsx-invalid', 'The workbook is damaged or altered: it holds data its ZIP directory does not list.');

		// Inflate every entry, counting real output bytes; stop at the first overrun.
		let total = 0;
		let compressed = 0;
		for (const e of ordered) {
			compressed += e.compressedSize;
			if (e.method === 0) {
				if (e.compressedSize !== e.uncompressedSize)
					return fail('xlsx-invalid', 'The workbook is damaged: a stored ZIP entry has inconsistent sizes.');
				total += e.uncompressedSize;
				continue;
			}
			if (e.compressedSize === 0) return fail('xlsx-invalid', 'The workbook is damaged: a ZIP entry is empty.');
			const r = await inflatedSize(
				path,
				e.dataStart,
				e.dataStart + e.compressedSize,
				Math.min(e.uncompressedSize, limits.maxUncompressedBytes - total)
			);
			if (r === 'over') return tooLarge(limits);
			if (r === 'corrupt') return fail('xlsx-invalid', `The workbook is damaged: the part ${e.name} cannot be unpacked.`);
			if (r !== e.uncompressedSize) return fail('xlsx-invalid', `The workbook is damaged: the part ${e.name} has the wrong size.`);
			total += r;
		}
		if (total > RATIO_FLOOR && total > compressed * MAX_RATIO) return tooLarge(limits);
		return { ok: true, entries, uncompressedBytes: total };
	} finally {
		await fh.close();
	}
}

/** Bytes that inflating [start, end) of the file produces, or 'over' as soon as it passes `cap`. */
function inflatedSize(path: string, start: number, end: number, cap: number): Promise<number | 'over' | 'corrupt'> {
	return new Promise((resolve) => {
		const src = createReadStream(path, { start, end: end - 1 });
		const inflate = createInflateRaw();
		let n = 0;
		let settled = false;
		const done = (v: number | 'over' | 'corrupt') => {
			if (settled) return;
			settled = true;
			src.destroy();
			inflate.destroy();
			resolve(v);
		};
		inflate.on('data', (chunk: Buffer) => {
			n += chunk.length;
			if (n > cap) done('over');
		});
		inflate.on('end', () => done(n));
		inflate.on('error', () => done('corrupt'));
		src.on('error', () => done('corrupt'));
		src.pipe(inflate);
	});
}
